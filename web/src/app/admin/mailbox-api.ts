import { HttpClient } from '@angular/common/http';
import { inject, Injectable } from '@angular/core';
import { Observable, map } from 'rxjs';

export interface MailMessage {
  id: number;
  receivedAt: string;
  from: string;
  to: string[];
  subject: string;
  text: string;
}

/** The local fake mail server's messages (development and tests; 404 in production). */
@Injectable({ providedIn: 'root' })
export class MailboxApi {
  private readonly http = inject(HttpClient);

  messages(): Observable<MailMessage[]> {
    return this.http.get<{ items: MailMessage[] }>('/api/dev/mail').pipe(map((r) => r.items));
  }
}
