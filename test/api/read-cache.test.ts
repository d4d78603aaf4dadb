// The read cache through real HTTP on the real database: an unchanged answer is served from the
// cache, every committed change (through the API or straight into PostgreSQL from another
// connection) makes the next answer fresh, a rolled-back write changes nothing, answers are kept
// per user, and If-None-Match gives 304.
import { expect } from 'chai';
import request from 'supertest';
import pg from 'pg';
import { testApp, tokenFor } from '../helpers/api.js';
import { testSettings } from '../helpers/db.js';
import { FIXTURE_PASSWORD, fixtureEmail } from '../helpers/fixtures.js';
import { ReadCache } from '../../api/src/services/read-cache.js';
import type { Role } from '../../api/src/domain/roles.js';

const app = () => testApp();
const auth = async (role: Role) => ({ Authorization: `Bearer ${await tokenFor(role)}` });

async function outside<T>(fn: (c: pg.Client) => Promise<T>): Promise<T> {
  const s = testSettings();
  const client = new pg.Client({ host: s.pgHost, port: s.pgPort, user: 'postgres', database: s.databaseName });
  await client.connect();
  try {
    return await fn(client);
  } finally {
    await client.end();
  }
}

const version = () => outside(async (c) => Number((await c.query('select value from data_version where id = 1')).rows[0].value));

describe('read cache', function () {
  this.timeout(60_000);
  let compoundId = 0;
  let projectId = 0;

  before(async () => {
    const p = await request(app()).post('/api/projects').set(await auth('lead')).send({ code: 'RCCH', name: 'Read cache project' });
    expect(p.status, JSON.stringify(p.body)).to.equal(201);
    projectId = p.body.id;
    const s = await request(app()).post('/api/series').set(await auth('chemist')).send({ projectId, code: 'RC', name: 'Cache series' });
    expect(s.status, JSON.stringify(s.body)).to.equal(201);
    const c = await request(app()).post('/api/compounds').set(await auth('chemist')).send({ structure: 'OC(=O)c1ccc(Cl)cc1C', seriesId: s.body.id, name: 'first name' });
    expect(c.status, JSON.stringify(c.body)).to.equal(201);
    compoundId = c.body.id;
  });

  it('serves an unchanged compound page from the cache, with the same body', async () => {
    const first = await request(app()).get(`/api/compounds/${compoundId}`).set(await auth('viewer')).expect(200);
    const second = await request(app()).get(`/api/compounds/${compoundId}`).set(await auth('viewer')).expect(200);
    expect(second.headers['x-read-cache']).to.equal('hit');
    expect(second.body).to.deep.equal(first.body);
    expect(second.headers['content-type']).to.match(/application\/json/);
    expect(second.headers.etag).to.equal(first.headers.etag);
    // Kept on the server only: browsers and proxies are told not to store registry data.
    expect(second.headers['cache-control']).to.equal('no-store');
  });

  it('answers 304 to If-None-Match with the current ETag', async () => {
    const first = await request(app()).get(`/api/compounds/${compoundId}`).set(await auth('viewer')).expect(200);
    const again = await request(app()).get(`/api/compounds/${compoundId}`).set(await auth('viewer')).set('If-None-Match', first.headers.etag).expect(304);
    expect(again.text).to.equal('');
  });

  it('gives a fresh answer after a change through the API', async () => {
    await request(app()).get(`/api/compounds/${compoundId}`).set(await auth('viewer')).expect(200);
    const b = await request(app()).post(`/api/compounds/${compoundId}/batches`).set(await auth('chemist')).send({ purity: 97.5 });
    expect(b.status, JSON.stringify(b.body)).to.equal(201);
    const after = await request(app()).get(`/api/compounds/${compoundId}`).set(await auth('viewer')).expect(200);
    expect(after.headers['x-read-cache']).to.equal('miss');
    expect(after.body.batches).to.have.length(2);
  });

  it('gives a fresh answer after a change committed by another connection (another process)', async () => {
    await request(app()).get(`/api/compounds/${compoundId}`).set(await auth('viewer')).expect(200);
    const before = await version();
    await outside((c) => c.query('update compound set name = $1 where id = $2', ['renamed outside', compoundId]));
    expect(await version()).to.equal(before + 1);
    const after = await request(app()).get(`/api/compounds/${compoundId}`).set(await auth('viewer')).expect(200);
    expect(after.headers['x-read-cache']).to.equal('miss');
    expect(after.body.name).to.equal('renamed outside');
  });

  it('raises the data version once per committed transaction, and not for a rolled-back one or a sign-in', async () => {
    const v0 = await version();
    await outside(async (c) => {
      await c.query('begin');
      await c.query('update compound set name = $1 where id = $2', ['rolled back', compoundId]);
      await c.query('update compound set name = $1 where id = $2', ['rolled back twice', compoundId]);
      await c.query('rollback');
    });
    expect(await version()).to.equal(v0);
    await outside(async (c) => {
      await c.query('begin');
      await c.query('update compound set name = $1 where id = $2', ['one', compoundId]);
      await c.query('update compound set name = $1 where id = $2', ['two', compoundId]);
      await c.query('commit');
    });
    expect(await version()).to.equal(v0 + 1);
    // A sign-in records last_sign_in_at on the user: not page data.
    await request(app()).post('/api/auth/login').send({ email: fixtureEmail('viewer'), password: FIXTURE_PASSWORD }).expect(200);
    expect(await version()).to.equal(v0 + 1);
  });

  it('keeps answers per user: one user’s cached answer is never served to another', async () => {
    const url = `/api/sar?project=${projectId}`;
    await request(app()).get(url).set(await auth('viewer')).expect(200);
    const viewerAgain = await request(app()).get(url).set(await auth('viewer')).expect(200);
    expect(viewerAgain.headers['x-read-cache']).to.equal('hit');
    const chemist = await request(app()).get(url).set(await auth('chemist')).expect(200);
    expect(chemist.headers['x-read-cache']).to.equal('miss');
  });

  it('keeps search answers keyed by their body, and never an error', async () => {
    const body = { text: 'renamed' };
    await request(app()).post('/api/compounds/search').set(await auth('viewer')).send(body).expect(200);
    const again = await request(app()).post('/api/compounds/search').set(await auth('viewer')).send(body).expect(200);
    expect(again.headers['x-read-cache']).to.equal('hit');
    const other = await request(app()).post('/api/compounds/search').set(await auth('viewer')).send({ text: 'something else' }).expect(200);
    expect(other.headers['x-read-cache']).to.equal('miss');
    const bad = await request(app()).post('/api/compounds/search').set(await auth('viewer')).send({ substructure: { structure: 'C1CC(' } });
    expect(bad.status).to.equal(400);
    const badAgain = await request(app()).post('/api/compounds/search').set(await auth('viewer')).send({ substructure: { structure: 'C1CC(' } });
    expect(badAgain.status).to.equal(400);
    expect(badAgain.headers['x-read-cache']).to.not.equal('hit');
  });

  it('still checks the role before the cache answers', async () => {
    const res = await request(app()).get(`/api/compounds/${compoundId}`);
    expect(res.status).to.equal(401);
  });
});

describe('ReadCache (least recently used, bounded by bytes)', () => {
  it('drops the least recently used entries past its byte bound and forgets a stale version', () => {
    const cache = new ReadCache(100);
    cache.set('a', '1', Buffer.alloc(40));
    cache.set('b', '1', Buffer.alloc(40));
    expect(cache.get('a', '1')).to.not.equal(undefined); // a is now the most recent
    cache.set('c', '1', Buffer.alloc(40)); // 120 bytes > 100: b goes
    expect(cache.get('b', '1')).to.equal(undefined);
    expect(cache.get('a', '1')).to.not.equal(undefined);
    expect(cache.get('c', '1')).to.not.equal(undefined);
    expect(cache.storedBytes).to.equal(80);
    expect(cache.get('a', '2')).to.equal(undefined); // another data version: dropped
    expect(cache.size).to.equal(1);
    expect(cache.storedBytes).to.equal(40);
  });
});
