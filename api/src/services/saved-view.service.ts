// Saved SAR views: a name, the query and the grid layout, private to the owner or shared with
// the project. Only the owner edits or deletes a view; edits carry the version they were made on.
import type { EntityManager } from '@mikro-orm/postgresql';
import { UniqueConstraintViolationException } from '@mikro-orm/core';
import { Project } from '../entities/index.js';
import { SavedView, type ISavedView, type SarViewState } from '../entities/saved-view.entity.js';
import { HttpError } from '../http-error.js';
import { audit } from './audit.service.js';

export function viewOf(v: ISavedView, userId: number) {
  return {
    id: v.id,
    name: v.name,
    projectId: v.project.id,
    shared: v.shared,
    owner: { id: v.owner.id, name: v.owner.name },
    mine: v.owner.id === userId,
    state: v.state,
    version: v.version,
    updatedAt: v.updatedAt,
  };
}

export async function listViews(em: EntityManager, userId: number, projectId: number) {
  const views = await em.find(SavedView, { project: projectId, $or: [{ owner: userId }, { shared: true }] }, { populate: ['owner'], orderBy: { name: 'asc', id: 'asc' } });
  return { items: views.map((v) => viewOf(v, userId)) };
}

async function mustOwn(em: EntityManager, userId: number, id: number) {
  const view = await em.findOne(SavedView, { id }, { populate: ['owner'] });
  if (!view || (view.owner.id !== userId && !view.shared)) throw HttpError.notFound(`No saved view with id ${id}.`);
  if (view.owner.id !== userId) throw HttpError.forbidden('Only the owner of a saved view can change or delete it.');
  return view;
}

function duplicateName(name: string) {
  return HttpError.conflict('duplicate_view_name', `You already have a view named "${name}" in this project.`, [{ field: 'name', message: 'already used' }]);
}

export async function createView(em: EntityManager, userId: number, body: { projectId: number; name: string; shared: boolean; state: SarViewState }) {
  const project = await em.findOne(Project, { id: body.projectId });
  if (!project) throw HttpError.badRequest(`projectId: no project with id ${body.projectId}`, [{ field: 'projectId', message: 'no such project' }]);
  const view = em.create(SavedView, { name: body.name, owner: userId, project, shared: body.shared, state: body.state });
  audit(em, userId, 'view.create', 'SavedView', '(new)', { name: body.name, projectId: body.projectId, shared: body.shared });
  try {
    await em.flush();
  } catch (err) {
    if (err instanceof UniqueConstraintViolationException) throw duplicateName(body.name);
    throw err;
  }
  await em.populate(view, ['owner']);
  return viewOf(view, userId);
}

export async function updateView(em: EntityManager, userId: number, id: number, body: { version: number; name?: string; shared?: boolean; state?: SarViewState }) {
  const view = await mustOwn(em, userId, id);
  if (body.version !== view.version) {
    throw HttpError.conflict('stale_version', `The view "${view.name}" was changed since you loaded it (version ${view.version}, yours ${body.version}). Reload it and try again.`);
  }
  if (body.name !== undefined) view.name = body.name;
  if (body.shared !== undefined) view.shared = body.shared;
  if (body.state !== undefined) view.state = body.state;
  audit(em, userId, 'view.update', 'SavedView', id, { name: body.name, shared: body.shared, state: body.state !== undefined });
  try {
    await em.flush();
  } catch (err) {
    if (err instanceof UniqueConstraintViolationException) throw duplicateName(body.name ?? view.name);
    throw err;
  }
  return viewOf(view, userId);
}

export async function deleteView(em: EntityManager, userId: number, id: number) {
  const view = await mustOwn(em, userId, id);
  audit(em, userId, 'view.delete', 'SavedView', id, { name: view.name, state: view.state });
  em.remove(view);
  await em.flush();
}
