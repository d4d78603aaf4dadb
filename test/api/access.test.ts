// Route × role table (DESIGN §1). It is checked against the routers' own list of routes, so a
// route added without an entry here fails the first test.
import { expect } from 'chai';
import request from 'supertest';
import { ROLES, type Role } from '../../api/src/domain/roles.js';
import { testApp, tokenFor } from '../helpers/api.js';

interface Access {
  /** Callable without a token. */
  public?: boolean;
  /** Roles that get past authorisation (anything but 401/403). */
  roles: Role[];
  /** A concrete path for parameterised routes. */
  sample?: string;
  body?: object;
}

const ALL: Role[] = [...ROLES];

export const ACCESS: Record<string, Access> = {
  'GET /api/health': { public: true, roles: ALL },
  'POST /api/auth/login': { public: true, roles: ALL, body: {} },
  'GET /api/auth/me': { roles: ALL },
  'POST /api/auth/password-reset': { public: true, roles: ALL, body: {} },
  'POST /api/auth/password-reset/confirm': { public: true, roles: ALL, body: {} },
  'POST /api/auth/invitation/accept': { public: true, roles: ALL, body: {} },
  'POST /api/auth/password': { roles: ALL, body: {} },
  'POST /api/users/invitations': { roles: ['admin'], body: {} },
  'GET /api/users': { roles: ['admin'] },
  'POST /api/users': { roles: ['admin'], body: {} },
  'PATCH /api/users/:id': { roles: ['admin'], sample: '/api/users/999999', body: { name: 'Nobody' } },
  'GET /api/projects': { roles: ALL },
  'POST /api/projects': { roles: ['admin', 'lead'], body: {} },
  'GET /api/series': { roles: ALL },
  'POST /api/series': { roles: ['admin', 'chemist'], body: {} },
  'PATCH /api/series/:id': { roles: ['admin', 'chemist'], sample: '/api/series/999999', body: {} },
  'GET /api/compounds': { roles: ALL },
  'POST /api/compounds': { roles: ['admin', 'chemist'], body: {} },
  'POST /api/compounds/preview': { roles: ALL, body: {} },
  'POST /api/compounds/search': { roles: ALL, body: {} },
  'GET /api/compounds/import/template.csv': { roles: ALL },
  'POST /api/compounds/import/inspect': { roles: ['admin', 'chemist'] },
  'POST /api/compounds/import': { roles: ['admin', 'chemist'] },
  'GET /api/compounds/import/:id': { roles: ALL, sample: '/api/compounds/import/999999' },
  'GET /api/compounds/import/:id/report.csv': { roles: ALL, sample: '/api/compounds/import/999999/report.csv' },
  'GET /api/compounds/:idOrRegistryNumber': { roles: ALL, sample: '/api/compounds/CPD-999999' },
  'GET /api/compounds/:id/depiction.svg': { roles: ALL, sample: '/api/compounds/999999/depiction.svg' },
  'GET /api/compounds/:id/batches': { roles: ALL, sample: '/api/compounds/999999/batches' },
  'POST /api/compounds/:id/batches': { roles: ['admin', 'chemist'], sample: '/api/compounds/999999/batches', body: {} },
  'GET /api/projects/:id': { roles: ALL, sample: '/api/projects/999999' },
  'PUT /api/projects/:id/targets': { roles: ['admin', 'pharmacologist'], sample: '/api/projects/999999/targets', body: {} },
  'GET /api/targets': { roles: ALL },
  'POST /api/targets': { roles: ['admin', 'pharmacologist'], body: {} },
  'PATCH /api/targets/:id': { roles: ['admin', 'pharmacologist'], sample: '/api/targets/999999', body: {} },
  'GET /api/assays': { roles: ALL },
  'GET /api/assays/templates/:name': { roles: ALL, sample: '/api/assays/templates/raw-data-long.csv' },
  'POST /api/assays': { roles: ['admin', 'pharmacologist'], body: {} },
  'GET /api/assays/:id': { roles: ALL, sample: '/api/assays/999999' },
  'PATCH /api/assays/:id': { roles: ['admin', 'pharmacologist'], sample: '/api/assays/999999', body: {} },
  'POST /api/assays/:id/runs': { roles: ['admin', 'pharmacologist'], sample: '/api/assays/999999/runs', body: {} },
  'GET /api/assays/:id/call-thresholds': { roles: ALL, sample: '/api/assays/999999/call-thresholds' },
  'PUT /api/assays/:id/call-thresholds': { roles: ['admin', 'pharmacologist'], sample: '/api/assays/999999/call-thresholds', body: { thresholds: null } },
  'GET /api/runs/:id': { roles: ALL, sample: '/api/runs/999999' },
  'GET /api/runs/:id/schild': { roles: ALL, sample: '/api/runs/999999/schild' },
  'GET /api/runs/:id/allosteric': { roles: ALL, sample: '/api/runs/999999/allosteric' },
  'GET /api/runs/:id/files/:fileId': { roles: ALL, sample: '/api/runs/999999/files/1' },
  'POST /api/runs/:id/submit': { roles: ['admin', 'pharmacologist'], sample: '/api/runs/999999/submit' },
  'GET /api/results': { roles: ALL },
  'POST /api/results': { roles: ['admin', 'pharmacologist'], body: {} },
  'POST /api/results/submit': { roles: ['admin', 'pharmacologist'], body: {} },
  'GET /api/results/:id': { roles: ALL, sample: '/api/results/999999' },
  'PATCH /api/results/:id': { roles: ['admin', 'pharmacologist'], sample: '/api/results/999999', body: {} },
  'POST /api/results/:id/submit': { roles: ['admin', 'pharmacologist'], sample: '/api/results/999999/submit' },
  'POST /api/results/:id/approve': { roles: ['admin', 'lead'], sample: '/api/results/999999/approve', body: {} },
  'POST /api/results/:id/reject': { roles: ['admin', 'lead'], sample: '/api/results/999999/reject', body: { comment: 'x' } },
  'GET /api/sar': { roles: ALL, sample: '/api/sar?project=999999' },
  'GET /api/sar/cell': { roles: ALL, sample: '/api/sar/cell?compound=999999&column=t:1:pKi' },
  'GET /api/sar/export.csv': { roles: ALL, sample: '/api/sar/export.csv?project=999999' },
  'POST /api/sar/export.csv': { roles: ALL, body: {} },
  'GET /api/sar/export.sdf': { roles: ALL, sample: '/api/sar/export.sdf?project=999999' },
  'POST /api/sar/export.sdf': { roles: ALL, body: {} },
  'GET /api/sar/views': { roles: ALL, sample: '/api/sar/views?project=999999' },
  'POST /api/sar/views': { roles: ALL, body: {} },
  'PATCH /api/sar/views/:id': { roles: ALL, sample: '/api/sar/views/999999', body: {} },
  'DELETE /api/sar/views/:id': { roles: ALL, sample: '/api/sar/views/999999' },
  'GET /api/calls': { roles: ALL },
  'POST /api/calls/recompute': { roles: ['admin', 'pharmacologist'], body: {} },
  'GET /api/calls/:id': { roles: ALL, sample: '/api/calls/999999' },
  'POST /api/calls/:id/override': { roles: ['admin', 'pharmacologist'], sample: '/api/calls/999999/override', body: {} },
  'POST /api/calls/:id/clear-override': { roles: ['admin', 'pharmacologist'], sample: '/api/calls/999999/clear-override', body: {} },
  'GET /api/bias': { roles: ALL, sample: '/api/bias?compound=CPD-999999&target=1' },
  'GET /api/what-if': { roles: ALL, sample: '/api/what-if?compound=CPD-999999&assay=999999' },
  'GET /api/selectivity': { roles: ALL, sample: '/api/selectivity?project=999999' },
  'GET /api/selectivity/export.csv': { roles: ALL, sample: '/api/selectivity/export.csv?project=999999' },
  'GET /api/selectivity/compare': { roles: ALL, sample: '/api/selectivity/compare?project=999999&compounds=1,2' },
  'GET /api/selectivity/compare/export.csv': { roles: ALL, sample: '/api/selectivity/compare/export.csv?project=999999&compounds=1,2' },
  'GET /api/decisions': { roles: ALL },
  'POST /api/decisions': { roles: ['admin', 'lead'], body: {} },
  'GET /api/overview': { roles: ALL, sample: '/api/overview?project=999999' },
  'PATCH /api/projects/:id/settings': { roles: ['admin', 'lead'], sample: '/api/projects/999999/settings', body: {} },
  'GET /api/dev/mail': { roles: ['admin'] },
};

describe('access by role on every API route', () => {
  it('has an entry for every route the app serves, and no stale entries', () => {
    const served = testApp().apiRoutes.map((r) => `${r.method} ${r.path}`).sort();
    expect(served).to.deep.equal(Object.keys(ACCESS).sort());
  });

  for (const [key, access] of Object.entries(ACCESS)) {
    const [method, path] = key.split(' ');
    const url = access.sample ?? path;
    const send = (auth?: string) => {
      const r = request(testApp())[method.toLowerCase() as 'get' | 'post' | 'patch' | 'put' | 'delete'](url);
      if (auth) r.set('Authorization', `Bearer ${auth}`);
      return access.body ? r.send(access.body) : r;
    };

    if (!access.public) {
      it(`${key} without a token → 401`, async () => {
        expect((await send()).status).to.equal(401);
      });
    }
    for (const role of ROLES) {
      const allowed = access.roles.includes(role);
      it(`${key} as ${role} → ${allowed ? 'allowed' : '403'}`, async () => {
        const res = await send(await tokenFor(role));
        if (allowed) expect(res.status, JSON.stringify(res.body)).to.not.be.oneOf([401, 403]);
        else expect(res.status).to.equal(403);
      });
    }
  }
});
