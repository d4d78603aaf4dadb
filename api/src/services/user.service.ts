import type { EntityManager } from '@mikro-orm/postgresql';
import { removesLastAdmin, type Role } from '../domain/roles.js';
import { User, usersOf, type IUser } from '../entities/user.entity.js';
import { HttpError } from '../http-error.js';
import { audit } from './audit.service.js';
import { checkPassword, hashPassword } from './password.js';

export interface UserView {
  id: number;
  email: string;
  name: string;
  role: Role;
  active: boolean;
  lastSignInAt: string | null;
  /** An invitation is pending: the user has not chosen a password yet. */
  invited: boolean;
  createdAt: string;
  version: number;
}

export function userView(u: IUser): UserView {
  return {
    id: u.id,
    email: u.email,
    name: u.name,
    role: u.role,
    active: u.active,
    lastSignInAt: u.lastSignInAt?.toISOString() ?? null,
    invited: !!u.invitedAt,
    createdAt: u.createdAt.toISOString(),
    version: u.version,
  };
}

export interface NewUser {
  email: string;
  name: string;
  role: Role;
  password: string;
}

export interface UserChange {
  name?: string;
  role?: Role;
  active?: boolean;
  /** The version the editor saw; a different current version answers 409. */
  version?: number;
}

export async function listUsers(em: EntityManager): Promise<UserView[]> {
  const users = await usersOf(em).listAll();
  return users.map(userView);
}

export async function createUser(em: EntityManager, actorId: number | null, input: NewUser): Promise<UserView> {
  const email = input.email.trim().toLowerCase();
  const problems = checkPassword(input.password, email);
  if (problems.length) throw HttpError.badRequest(`password ${problems.join('; ')}`, [{ field: 'password', message: problems.join('; ') }]);
  const passwordHash = await hashPassword(input.password);
  return em.transactional(async (tx) => {
    const existing = await tx.findOne(User, { email });
    if (existing) throw HttpError.conflict('duplicate_email', `A user with the e-mail ${email} already exists.`, { id: existing.id });
    const user = tx.create(User, { email, name: input.name.trim(), role: input.role, passwordHash });
    await tx.persist(user).flush();
    audit(tx, actorId, 'user.create', 'User', user.id, { email, role: user.role });
    return userView(user);
  });
}

export async function updateUser(em: EntityManager, actorId: number, id: number, change: UserChange): Promise<UserView> {
  return em.transactional(async (tx) => {
    const admins = await usersOf(tx).lockActiveAdmins();
    const user = await tx.findOne(User, { id });
    if (!user) throw HttpError.notFound(`No user with id ${id}.`);
    if (change.version !== undefined && change.version !== user.version) {
      throw HttpError.conflict('stale_version', `User ${user.email} was changed by someone else since you loaded it; reload and try again.`, { currentVersion: user.version });
    }
    const nextRole = change.role ?? user.role;
    const nextActive = change.active ?? user.active;
    if (removesLastAdmin({ activeAdminIds: admins.map((a) => a.id), targetId: user.id, nextRole, nextActive })) {
      throw HttpError.conflict('last_admin', `${user.email} is the last active administrator; make someone else an administrator first.`);
    }
    const before = { name: user.name, role: user.role, active: user.active };
    if (change.name !== undefined) user.name = change.name.trim();
    if (nextRole !== user.role || nextActive !== user.active) user.tokenVersion += 1;
    user.role = nextRole;
    user.active = nextActive;
    const after = { name: user.name, role: user.role, active: user.active };
    if (JSON.stringify(before) !== JSON.stringify(after)) audit(tx, actorId, 'user.update', 'User', user.id, { before, after });
    await tx.flush();
    return userView(user);
  });
}
