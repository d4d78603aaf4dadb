import { HttpClient } from '@angular/common/http';
import { inject, Injectable } from '@angular/core';
import { Observable, map } from 'rxjs';
import type { Role } from '../auth/roles';

export interface UserRow {
  id: number;
  email: string;
  name: string;
  role: Role;
  active: boolean;
  /** Invited by e-mail and not yet signed up (no password chosen). */
  invited?: boolean;
  lastSignInAt: string | null;
  createdAt: string;
  version: number;
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
  version?: number;
}

@Injectable({ providedIn: 'root' })
export class UserApi {
  private readonly http = inject(HttpClient);

  list(): Observable<UserRow[]> {
    return this.http.get<{ items: UserRow[] }>('/api/users').pipe(map((r) => r.items));
  }

  /** Sends an invitation e-mail; the link sets the first password and expires. */
  invite(invitation: { email: string; name: string; role: Role }): Observable<unknown> {
    return this.http.post('/api/users/invitations', invitation);
  }

  create(user: NewUser): Observable<UserRow> {
    return this.http.post<UserRow>('/api/users', user);
  }

  update(id: number, change: UserChange): Observable<UserRow> {
    return this.http.patch<UserRow>(`/api/users/${id}`, change);
  }
}
