import { HttpClient } from '@angular/common/http';
import { inject, Injectable } from '@angular/core';
import { Observable, map } from 'rxjs';
import { AuthStore, type LoginAnswer, type SignedInUser } from './auth-store';

/** The e-mailed account links: password reset and invitation acceptance (they sign in on success). */
@Injectable({ providedIn: 'root' })
export class AccountApi {
  private readonly http = inject(HttpClient);
  private readonly store = inject(AuthStore);

  requestReset(email: string): Observable<string> {
    return this.http.post<{ message: string }>('/api/auth/password-reset', { email }).pipe(map((a) => a.message));
  }

  confirmReset(token: string, password: string): Observable<SignedInUser> {
    return this.http.post<LoginAnswer>('/api/auth/password-reset/confirm', { token, password }).pipe(map((a) => this.store.adopt(a)));
  }

  acceptInvitation(token: string, password: string, name?: string): Observable<SignedInUser> {
    return this.http.post<LoginAnswer>('/api/auth/invitation/accept', { token, password, ...(name ? { name } : {}) }).pipe(map((a) => this.store.adopt(a)));
  }
}
