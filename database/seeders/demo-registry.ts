// Demo registry (DESIGN §10, invented): the Tern programme, its two series enumerated from
// invented cores and R-groups (fixtures/demo/tern-series.json), with batches, some as salts.
// Deterministic and idempotent: a structure already registered is skipped.
import type { EntityManager } from '@mikro-orm/postgresql';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { ROOT } from '../../api/src/config.js';
import { analyseStructure } from '../../api/src/domain/chem.js';
import { Compound } from '../../api/src/entities/compound.entity.js';
import { Project, Series } from '../../api/src/entities/project.entity.js';
import { User } from '../../api/src/entities/user.entity.js';
import { addBatch, registerParsed } from '../../api/src/services/registry.service.js';

interface SeriesSpec {
  code: string;
  name: string;
  description: string;
  core: string;
  template: string;
  r1: Record<string, string>;
  r2: Record<string, string>;
}

interface DemoSpec {
  project: { code: string; name: string; description: string };
  series: SeriesSpec[];
}

export interface DemoAnalogue {
  series: string;
  alias: string;
  name: string;
  smiles: string;
}

/** Every analogue of the demo series, in a fixed order. */
export function demoAnalogues(spec: DemoSpec = loadSpec()): DemoAnalogue[] {
  const out: DemoAnalogue[] = [];
  for (const s of spec.series) {
    let n = 0;
    for (const [r1Name, r1] of Object.entries(s.r1)) {
      for (const [r2Name, r2] of Object.entries(s.r2)) {
        n++;
        out.push({ series: s.code, alias: `${s.code}-${String(n).padStart(3, '0')}`, name: `${s.code} R1=${r1Name}, R2=${r2Name}`, smiles: s.template.replace('{R1}', r1).replace('{R2}', r2) });
      }
    }
  }
  return out;
}

function loadSpec(): DemoSpec {
  return JSON.parse(readFileSync(join(ROOT, 'fixtures', 'demo', 'tern-series.json'), 'utf8')) as DemoSpec;
}

const SALTS = ['', '.Cl', '', '.OC(=O)/C=C/C(=O)O', '', '', '.Cl.Cl', ''];

export async function seedDemoRegistry(em: EntityManager, prefix: string): Promise<number> {
  const spec = loadSpec();
  const chemist = await em.findOne(User, { email: 'chemist@demo.test' });
  if (!chemist) throw new Error('the demo chemist account must be seeded first');
  let project = await em.findOne(Project, { code: spec.project.code });
  if (!project) {
    project = em.create(Project, spec.project);
    await em.persist(project).flush();
  }
  const seriesIds = new Map<string, number>();
  for (const s of spec.series) {
    let series = await em.findOne(Series, { project, code: s.code });
    if (!series) {
      series = em.create(Series, { project, code: s.code, name: s.name, description: s.description, core: s.core });
      await em.persist(series).flush();
    }
    seriesIds.set(s.code, series.id);
  }
  let created = 0;
  const analogues = demoAnalogues(spec);
  for (const [i, a] of analogues.entries()) {
    const submitted = a.smiles + SALTS[i % SALTS.length];
    const parsed = analyseStructure(submitted);
    if (await em.findOne(Compound, { idCode: parsed.idCode })) continue;
    const purity = 95 + ((i * 37) % 50) / 10;
    const { compoundId } = await registerParsed(em.fork(), chemist.id, prefix, parsed, { name: a.name, aliases: [a.alias], seriesId: seriesIds.get(a.series)!, batch: { purity, amountMg: 5 + ((i * 13) % 40), source: 'Tern chemistry', notebookRef: `TERN-NB-${String(100 + i)}` } }, submitted, 'demo seed');
    if (i % 6 === 5) {
      await addBatch(em.fork(), chemist.id, compoundId, { structure: a.smiles + '.Cl', purity: 99.2, amountMg: 120, source: 'Tern scale-up', notebookRef: `TERN-NB-${String(400 + i)}` });
    }
    created++;
  }
  return created;
}
