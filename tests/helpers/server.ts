import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { createTestApp, type TestApp } from './app';

export interface RunningTestServer extends TestApp {
  url: string;
  server: Server;
}

/** The whole product (API and built client) listening on a free loopback port, on its own database. */
export async function startTestServer(env: NodeJS.ProcessEnv = {}): Promise<RunningTestServer> {
  const t = await createTestApp({ serveClient: true }, env);
  const server = t.app.listen(0, '127.0.0.1');
  await new Promise<void>((resolve) => server.once('listening', resolve));
  const url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  t.ctx.config.appUrl = url;
  return {
    ...t,
    url,
    server,
    close: async () => {
      server.closeAllConnections();
      await new Promise((resolve) => server.close(resolve));
      await t.close();
    },
  };
}
