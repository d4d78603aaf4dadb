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
