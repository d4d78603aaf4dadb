import { EntityRepository, LockMode } from '@mikro-orm/postgresql';
import type { IUser } from './user.entity.js';

export class UserRepository extends EntityRepository<IUser> {
  findByEmail(email: string) {
    return this.findOne({ email: email.trim().toLowerCase() }, { populate: ['passwordHash'] });
  }

  listAll() {
    return this.findAll({ orderBy: { name: 'asc', id: 'asc' } });
  }

  /** Active admins, locked for the rest of the transaction (last-admin rule). */
  lockActiveAdmins() {
    return this.find({ role: 'admin', active: true }, { lockMode: LockMode.PESSIMISTIC_WRITE });
  }
}
