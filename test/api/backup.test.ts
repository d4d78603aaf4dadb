// Backups (issue 9): `npm run backup` and `npm run restore` (database/scripts/backup.mjs) against
// the test cluster: a backup restored into a fresh database holds the same rows, table by table.
import { expect } from 'chai';
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import request from 'supertest';
import { ROOT } from '../../api/src/config.js';
import { testApp, tokenFor } from '../helpers/api.js';
import { testSettings } from '../helpers/db.js';
import { dropDatabase, query } from '../helpers/server-process.js';

function script(...args: string[]) {
  const r = spawnSync(process.execPath, [join(ROOT, 'database', 'scripts', 'backup.mjs'), ...args], {
    cwd: ROOT,
    encoding: 'utf8',
    env: { ...process.env, PGPORT: String(testSettings().pgPort) },
  });
  if (r.status !== 0) throw new Error(`backup.mjs ${args.join(' ')} failed:\n${r.stdout}${r.stderr}`);
  return r.stdout;
}

/** Row count and a digest of every row of every table, in a stable order. */
async function fingerprint(database: string): Promise<Record<string, string>> {
  const tables = await query<{ t: string }>(database, `select tablename as t from pg_tables where schemaname = 'public' order by 1`);
  const out: Record<string, string> = {};
  for (const { t } of tables) {
    const [row] = await query<{ n: string; digest: string | null }>(database, `select count(*) as n, md5(string_agg(x::text, '|' order by x::text)) as digest from "${t}" x`);
    out[t] = `${row.n}:${row.digest ?? ''}`;
  }
  return out;
}

describe('backups: npm run backup and npm run restore', function () {
  this.timeout(120_000);
  const source = testSettings().databaseName;
  const restored = `${source}_restored`;
  let dir: string;

  before(async () => {
    dir = mkdtempSync(join(tmpdir(), 'ligandry-backup-'));
    // Some data of every kind the registry holds, beyond the fixture users.
    const chemist = { Authorization: `Bearer ${await tokenFor('chemist')}` };
    for (const smiles of ['CCN(CC)C(=O)c1ccc(Cl)cc1', 'CCN(CC)C(=O)c1ccc(F)cc1']) {
      const res = await request(testApp()).post('/api/compounds').set(chemist).send({ structure: smiles, confirm: true, batch: { purity: 97.5, notebookRef: 'NB-BACKUP' } });
      expect(res.status).to.be.oneOf([201, 409]);
    }
  });
  after(async () => {
    rmSync(dir, { recursive: true, force: true });
    const leftovers = await query<{ d: string }>('postgres', `select datname as d from pg_database where datname like $1`, [`${restored}%`]);
    for (const { d } of leftovers) await dropDatabase(d);
  });

  it('restores a backup into a fresh database with the same rows in every table', async () => {
    const before = await fingerprint(source);
    expect(Number(before.compound.split(':')[0])).to.be.greaterThan(0);
    script('backup', '--database', source, '--out', dir);
    const files = readdirSync(dir).filter((f) => f.endsWith('.dump'));
    expect(files).to.have.length(1);
    expect(readdirSync(dir).some((f) => f.endsWith('.partial'))).to.equal(false);
    script('restore', join(dir, files[0]), '--into', restored);
    expect(await fingerprint(restored)).to.deep.equal(before);
    const [mig] = await query<{ n: string }>(restored, 'select count(*) as n from mikro_orm_migrations');
    expect(Number(mig.n)).to.be.greaterThan(0);
  });

  it('restoring over an existing database keeps the previous one under another name', async () => {
    await query(restored, `delete from audit_event where id = (select min(id) from audit_event)`);
    const changed = await fingerprint(restored);
    const file = join(dir, readdirSync(dir).filter((f) => f.endsWith('.dump'))[0]);
    const out = script('restore', file, '--into', restored);
    expect(out).to.match(/previous database is kept as /);
    expect(await fingerprint(restored)).to.deep.equal(await fingerprint(source));
    const kept = await query<{ d: string }>('postgres', `select datname as d from pg_database where datname like $1`, [`${restored}_before_restore_%`]);
    expect(kept).to.have.length(1);
    expect(await fingerprint(kept[0].d)).to.deep.equal(changed);
  });

  it('refuses a missing file and leaves no half-restored database', async () => {
    expect(() => script('restore', join(dir, 'nope.dump'), '--into', `${restored}_x`)).to.throw(/no backup file/);
    const [row] = await query<{ n: string }>('postgres', `select count(*) as n from pg_database where datname in ($1, $2)`, [`${restored}_x`, `${restored}_x_restoring`]);
    expect(Number(row.n)).to.equal(0);
    expect(existsSync(dir)).to.equal(true);
  });
});
