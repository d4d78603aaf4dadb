import request from 'supertest';
import { createApp } from '../../api/src/app.js';
import type { Role } from '../../api/src/domain/roles.js';
import { testOrm, testSettings } from './db.js';
import { FIXTURE_PASSWORD, fixtureEmail } from './fixtures.js';

let app: ReturnType<typeof createApp> | undefined;

/** One app for the run, on the test database, through real HTTP (supertest). */
export function testApp() {
  app ??= createApp({ orm: testOrm(), settings: testSettings() });
  return app;
}

const tokens = new Map<string, string>();

/** A bearer token for a fixture user (signed in once through the real login route). */
export async function tokenFor(role: Role): Promise<string> {
  const cached = tokens.get(role);
  if (cached) return cached;
  const res = await request(testApp()).post('/api/auth/login').send({ email: fixtureEmail(role), password: FIXTURE_PASSWORD });
  if (res.status !== 200) throw new Error(`fixture login for ${role} failed: ${res.status} ${JSON.stringify(res.body)}`);
  tokens.set(role, res.body.token);
  return res.body.token;
}

export function forgetTokens(): void {
  tokens.clear();
}

export interface MailItem {
  to: string[];
  subject: string;
  text: string;
}

/**
 * The newest message in the fake mailbox to `email` whose subject holds `subject` and whose text
 * holds `text` when given (the mailbox is shared by every suite of the run); waits up to `timeoutMs`.
 */
export async function mailTo(email: string, subject: string | RegExp, text?: string, timeoutMs = 5000): Promise<MailItem> {
  const until = Date.now() + timeoutMs;
  const admin = await tokenFor('admin');
  const matches = (s: string) => (typeof subject === 'string' ? s.includes(subject) : subject.test(s));
  while (Date.now() < until) {
    const res = await request(testApp()).get('/api/dev/mail').set('Authorization', `Bearer ${admin}`);
    const hit = (res.body.items as MailItem[]).find((m) => m.to.includes(email) && matches(m.subject) && (text === undefined || m.text.includes(text)));
    if (hit) return hit;
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`no e-mail to ${email} with "${String(subject)}"`);
}

/** Enters a pKi by hand for `sample` in a binding assay, submits it (pharmacologist) and approves it (lead). */
export async function approvedPKi(assayId: number, sample: string, value: number, qualifier: '=' | '<' | '>' = '='): Promise<number> {
  const pharmacologist = { Authorization: `Bearer ${await tokenFor('pharmacologist')}` };
  const created = await request(testApp()).post('/api/results').set(pharmacologist).send({ assayId, sample, values: { pKi: { value, qualifier } }, note: 'entered by a test' });
  if (created.status !== 201) throw new Error(`manual result: ${created.status} ${JSON.stringify(created.body)}`);
  const submitted = await request(testApp()).post(`/api/results/${created.body.id}/submit`).set(pharmacologist);
  if (submitted.status !== 200) throw new Error(`submit: ${submitted.status} ${JSON.stringify(submitted.body)}`);
  const approved = await request(testApp()).post(`/api/results/${created.body.id}/approve`).set('Authorization', `Bearer ${await tokenFor('lead')}`).send({});
  if (approved.status !== 200) throw new Error(`approve: ${approved.status} ${JSON.stringify(approved.body)}`);
  return created.body.id;
}
