import request from 'supertest';
import type { Express } from 'express';

/** A cookie-keeping client that fetches and sends the CSRF token like the browser client does. */
export class TestAgent {
  readonly agent: ReturnType<typeof request.agent>;
  private csrf?: string;

  constructor(app: Express) {
    this.agent = request.agent(app);
  }

  async csrfToken(refresh = false) {
    if (!this.csrf || refresh) {
      const res = await this.agent.get('/api/auth/csrf').expect(200);
      this.csrf = res.body.csrfToken;
    }
    return this.csrf!;
  }

  get(path: string) {
    return this.agent.get(path);
  }

  async send(method: 'post' | 'put' | 'patch' | 'delete', path: string, body?: unknown) {
    const token = await this.csrfToken();
    const req = this.agent[method](path).set('x-csrf-token', token);
    return body === undefined ? req : req.send(body as object);
  }

  post(path: string, body?: unknown) {
    return this.send('post', path, body);
  }

  async login(email: string, password: string) {
    const res = await this.post('/api/auth/login', { email, password });
    // The session id changes at sign-in, and the token is bound to it.
    await this.csrfToken(true);
    return res;
  }
}

export async function signedIn(app: Express, email: string, password: string) {
  const agent = new TestAgent(app);
  const res = await agent.login(email, password);
  if (res.status !== 200) throw new Error(`sign-in failed for ${email}: ${res.status} ${JSON.stringify(res.body)}`);
  return agent;
}
