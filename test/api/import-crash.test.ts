// No lost data (issue 9): the real server, killed with SIGKILL in the middle of a large import,
// leaves no half-registered record. After a restart every compound has its first batch and its
// audit event, and the job is marked failed with a report of exactly what was kept.
import { expect } from 'chai';
import { hashPassword } from '../../api/src/services/password.js';
import { testSettings } from '../helpers/db.js';
import { dropDatabase, freePort, query, startServer, throwawayDatabase, type ServerProcess } from '../helpers/server-process.js';

const ARYLS = ['c1ccccc1', 'c1ccncc1', 'c1ccc(F)cc1'];

/** 5,000 distinct N-alkyl N-aryl amides (invented, small). */
function importCsv(rows = 5000): string {
  const lines = ['smiles,name'];
  outer: for (const aryl of ARYLS) {
    for (let a = 1; a <= 60; a++) {
      for (let b = 1; b <= 40; b++) {
        lines.push(`${'C'.repeat(a)}N(C(=O)${'C'.repeat(b)})${aryl},Crash ${lines.length}`);
        if (lines.length > rows) break outer;
      }
    }
  }
  return lines.join('\n') + '\n';
}

describe('no lost data: the server killed in the middle of an import', function () {
  this.timeout(240_000);
  const database = `${testSettings().databaseName}_crash`;
  let server: ServerProcess | undefined;

  before(async () => {
    await throwawayDatabase(database);
    const hash = await hashPassword('crash-harbour-lamp-1');
    await query(database, `insert into app_user (created_at, updated_at, email, name, role, password_hash, active, token_version, version) values (now(), now(), 'crash@fixture.test', 'Crash Chemist', 'chemist', $1, true, 0, 1)`, [hash]);
  });
  after(async () => {
    await server?.stop();
    await dropDatabase(database);
  });

  it('registers whole records only, and reports what was kept', async () => {
    const port = await freePort();
    server = await startServer(database, port);
    const login = await fetch(`${server.baseUrl}/api/auth/login`, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ email: 'crash@fixture.test', password: 'crash-harbour-lamp-1' }) });
    const { token } = (await login.json()) as { token: string };
    const auth = { Authorization: `Bearer ${token}` };
    const form = new FormData();
    form.append('file', new Blob([importCsv()], { type: 'text/csv' }), 'crash.csv');
    const started = await fetch(`${server.baseUrl}/api/compounds/import`, { method: 'POST', headers: auth, body: form });
    expect(started.status).to.equal(202);
    const job = (await started.json()) as { id: number; total: number };
    expect(job.total).to.equal(5000);

    // Kill as soon as some chunks are committed, well before the end.
    let processedAtKill = 0;
    for (let i = 0; i < 3000; i++) {
      const [row] = await query<{ processed: number; status: string }>(database, 'select processed, status from import_job where id = $1', [job.id]);
      if (row.processed >= 300) {
        await server.kill9();
        processedAtKill = row.processed;
        break;
      }
      await new Promise((r) => setTimeout(r, 10));
    }
    expect(processedAtKill, 'the import was killed part-way').to.be.within(300, 4999);
    const [mid] = await query<{ status: string }>(database, 'select status from import_job where id = $1', [job.id]);
    expect(mid.status).to.equal('running');

    server = await startServer(database, port);
    const [after] = await query<{ status: string; failure: string; processed: number; created: number; errors: number; duplicates: number; n: number }>(
      database,
      'select status, failure, processed, created, errors, duplicates, jsonb_array_length(report) as n from import_job where id = $1',
      [job.id],
    );
    expect(after.status).to.equal('failed');
    expect(after.failure).to.match(/^Interrupted by a server restart after \d+ of 5000 records/);
    expect(after.processed).to.be.within(processedAtKill, 4999);
    expect(after.n).to.equal(after.processed);
    expect(after.processed % 100).to.equal(0);

    const [counts] = await query<{ compounds: string; batches: string; no_batch: string; no_audit: string }>(
      database,
      `select (select count(*) from compound) as compounds,
              (select count(*) from batch) as batches,
              (select count(*) from compound c where not exists (select 1 from batch b where b.compound_id = c.id and b.sequence = 1)) as no_batch,
              (select count(*) from compound c where not exists (select 1 from audit_event a where a.entity_type = 'Compound' and a.entity_id = c.id::text and a.action = 'compound.register')) as no_audit`,
    );
    expect(Number(counts.compounds)).to.equal(after.created);
    expect(Number(counts.batches)).to.equal(after.created);
    expect(Number(counts.no_batch)).to.equal(0);
    expect(Number(counts.no_audit)).to.equal(0);

    const reported = await query<{ rn: string }>(database, `select o->>'registryNumber' as rn from import_job, jsonb_array_elements(report) o where id = $1 and o->>'status' = 'created'`, [job.id]);
    const registered = await query<{ registry_number: string }>(database, 'select registry_number from compound');
    expect(reported.map((r) => r.rn).sort()).to.deep.equal(registered.map((r) => r.registry_number).sort());

    // The server answers and the job is readable through the API after the restart.
    const res = await fetch(`${server.baseUrl}/api/compounds/import/${job.id}`, { headers: auth });
    const body = (await res.json()) as { status: string; report: unknown[] };
    expect(body.status).to.equal('failed');
    expect(body.report).to.have.length(after.processed);
  });
});
