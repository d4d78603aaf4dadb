import { expect } from 'chai';
import request from 'supertest';
import { testApp } from '../helpers/api.js';

describe('GET /api/health', () => {
  it('answers 200 with the database up, without a token', async () => {
    const res = await request(testApp()).get('/api/health');
    expect(res.status).to.equal(200);
    expect(res.body).to.include({ service: 'ligandry', status: 'ok', database: 'up', demo: false });
  });

  it('answers an unknown API route with a JSON 404', async () => {
    const res = await request(testApp()).get('/api/no-such-route');
    expect(res.status).to.equal(404);
    expect(res.body.error).to.include({ code: 'not_found' });
    expect(res.body.error.message).to.contain('/api/no-such-route');
  });

  it('answers malformed JSON with a 400 saying so', async () => {
    const res = await request(testApp()).post('/api/auth/login').set('content-type', 'application/json').send('{"email": ');
    expect(res.status).to.equal(400);
    expect(res.body.error.message).to.equal('The request body is not valid JSON.');
  });

  it('sends a content security policy that allows only this origin', async () => {
    const res = await request(testApp()).get('/api/health');
    expect(res.headers['content-security-policy']).to.contain("default-src 'self'");
    expect(res.headers['content-security-policy']).not.to.match(/https?:/);
  });
});
