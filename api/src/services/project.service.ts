import type { EntityManager } from '@mikro-orm/postgresql';
import { Project, Series, type IProject, type ISeries } from '../entities/project.entity.js';
import { HttpError } from '../http-error.js';
import { audit } from './audit.service.js';
import { CoreError, parseCore } from '../domain/rgroups.js';

export function projectView(p: IProject) {
  return { id: p.id, code: p.code, name: p.name, description: p.description ?? null, createdAt: p.createdAt.toISOString() };
}

export function seriesView(s: ISeries, compoundCount?: number) {
  return { id: s.id, projectId: s.project.id, code: s.code, name: s.name, description: s.description ?? null, core: s.core ?? null, compoundCount: compoundCount ?? null };
}

export async function listProjects(em: EntityManager) {
  return (await em.find(Project, {}, { orderBy: { code: 'asc' } })).map(projectView);
}

export async function createProject(em: EntityManager, actorId: number, input: { code: string; name: string; description?: string }) {
  return em.transactional(async (tx) => {
    const code = input.code.toUpperCase();
    if (await tx.findOne(Project, { code })) throw HttpError.conflict('duplicate_code', `A project with the code ${code} already exists.`);
    const project = tx.create(Project, { code, name: input.name, description: input.description ?? null });
    await tx.persist(project).flush();
    audit(tx, actorId, 'project.create', 'Project', project.id, { code, name: project.name });
    return projectView(project);
  });
}

export async function listSeries(em: EntityManager, projectId?: number) {
  const series = await em.find(Series, projectId ? { project: projectId } : {}, { orderBy: { project: { code: 'asc' }, code: 'asc' }, populate: ['project'] });
  const counts = await em.getConnection().execute<{ series_id: number; n: string }[]>('select series_id, count(*) as n from compound where series_id is not null group by series_id');
  const byId = new Map(counts.map((c) => [c.series_id, Number(c.n)]));
  return series.map((s) => ({ ...seriesView(s, byId.get(s.id) ?? 0), projectCode: s.project.code }));
}

export async function createSeries(em: EntityManager, actorId: number, input: { projectId: number; code: string; name: string; description?: string; core?: string }) {
  return em.transactional(async (tx) => {
    const project = await tx.findOne(Project, { id: input.projectId });
    if (!project) throw HttpError.badRequest(`projectId: no project with id ${input.projectId}`, [{ field: 'projectId', message: `no project with id ${input.projectId}` }]);
    const code = input.code.toUpperCase();
    if (await tx.findOne(Series, { project, code })) throw HttpError.conflict('duplicate_code', `Project ${project.code} already has a series ${code}.`);
    const series = tx.create(Series, { project, code, name: input.name, description: input.description ?? null, core: input.core ?? null });
    await tx.persist(series).flush();
    audit(tx, actorId, 'series.create', 'Series', series.id, { project: project.code, code });
    return seriesView(series, 0);
  });
}


/** Changes a series' name, description or core; a core must parse with its attachment points. */
export async function updateSeries(em: EntityManager, actorId: number, id: number, input: { name?: string; description?: string | null; core?: string | null }) {
  if (input.core?.trim()) {
    try {
      parseCore(input.core);
    } catch (err) {
      if (err instanceof CoreError) throw HttpError.badRequest(`core: ${err.message}`, [{ field: 'core', message: err.message }]);
      throw err;
    }
  }
  return em.transactional(async (tx) => {
    const series = await tx.findOne(Series, { id }, { populate: ['project'] });
    if (!series) throw HttpError.notFound(`No series with id ${id}.`);
    const before = { name: series.name, description: series.description ?? null, core: series.core ?? null };
    if (input.name !== undefined) series.name = input.name;
    if (input.description !== undefined) series.description = input.description;
    if (input.core !== undefined) series.core = input.core?.trim() ? input.core : null;
    audit(tx, actorId, 'series.update', 'Series', id, { before, after: { name: series.name, description: series.description ?? null, core: series.core ?? null } });
    await tx.flush();
    return seriesView(series);
  });
}
