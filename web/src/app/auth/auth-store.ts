import { HttpClient } from '@angular/common/http';
import { computed, inject, Injectable, signal } from '@angular/core';
import { Observable, map, tap } from 'rxjs';
import { can, type Capability, type Role } from './roles';

export interface SignedInUser {
  id: number;
  email: string;
  name: string;
  role: Role;
}

interface Session {
  token: string;
  user: SignedInUser;
  expiresAt: number;
}

export interface LoginAnswer {
  token: string;
  user: SignedInUser;
  expiresIn: number;
}

const STORAGE_KEY = 'ligandry.session';

function readStored(): Session | null {
  try {
    const raw = localStorage.getItem(STORAGE_KEY);
    if (!raw) return null;
    const session = JSON.parse(raw) as Session;
    return session.expiresAt > Date.now() ? session : null;
  } catch {
    return null;
  }
}

/** The signed-in session: token, user and role, kept in localStorage across reloads. */
@Injectable({ providedIn: 'root' })
export class AuthStore {
  private readonly http = inject(HttpClient);
  private readonly session = signal<Session | null>(readStored());

  readonly user = computed(() => this.session()?.user ?? null);
  readonly signedIn = computed(() => this.session() !== null);

  token(): string | null {
    const s = this.session();
    if (s && s.expiresAt <= Date.now()) {
      this.clear();
      return null;
    }
    return s?.token ?? null;
  }

  can(capability: Capability): boolean {
    const user = this.user();
    return user !== null && can(user.role, capability);
  }

  signIn(email: string, password: string): Observable<SignedInUser> {
    return this.http.post<LoginAnswer>('/api/auth/login', { email, password }).pipe(
      tap((a) => this.store({ token: a.token, user: a.user, expiresAt: Date.now() + a.expiresIn * 1000 })),
      map((a) => a.user),
    );
  }

  /** Keeps the session answered by a route that signs in (invitation accepted, password reset). */
  adopt(answer: LoginAnswer): SignedInUser {
    this.store({ token: answer.token, user: answer.user, expiresAt: Date.now() + answer.expiresIn * 1000 });
    return answer.user;
  }

  /** Re-reads the user from the server (the role may have changed since sign-in). */
  refresh(): Observable<SignedInUser> {
    return this.http.get<{ user: SignedInUser }>('/api/auth/me').pipe(
      map((a) => a.user),
      tap((user) => {
        const s = this.session();
        if (s) this.store({ ...s, user });
      }),
    );
  }

  clear(): void {
    localStorage.removeItem(STORAGE_KEY);
    this.session.set(null);
  }

  private store(session: Session): void {
    localStorage.setItem(STORAGE_KEY, JSON.stringify(session));
    this.session.set(session);
  }
}
