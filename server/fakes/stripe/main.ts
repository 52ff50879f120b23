/**
 * Runs the local Stripe fake as its own process:
 *   STRIPE_WEBHOOK_SECRET=whsec_... STRIPE_FAKE_PORT=12111 tsx server/fakes/stripe/main.ts
 * Env: STRIPE_FAKE_PORT (default 12111), STRIPE_FAKE_STATE_FILE, STRIPE_WEBHOOK_URL,
 * STRIPE_WEBHOOK_SECRET (required), STRIPE_FAKE_PUBLIC_URL.
 */
import { startStripeFake } from './index';

const DEFAULT_PORT = 12111; // the port stripe-mock uses, so habits carry over

async function main(): Promise<void> {
  const env = process.env;
  const webhookSecret = env.STRIPE_WEBHOOK_SECRET;
  if (!webhookSecret) throw new Error('Set STRIPE_WEBHOOK_SECRET (the whsec_ secret the app verifies webhooks with).');
  const port = env.STRIPE_FAKE_PORT ? Number(env.STRIPE_FAKE_PORT) : DEFAULT_PORT;
  if (!Number.isInteger(port) || port < 0 || port > 65_535) throw new Error(`STRIPE_FAKE_PORT is not a port: ${env.STRIPE_FAKE_PORT}`);

  const fake = await startStripeFake({
    port,
    host: '127.0.0.1',
    stateFile: env.STRIPE_FAKE_STATE_FILE || undefined,
    webhookUrl: env.STRIPE_WEBHOOK_URL || undefined,
    webhookSecret,
    publicBaseUrl: env.STRIPE_FAKE_PUBLIC_URL || undefined,
  });
  console.log(`Stripe fake listening on ${fake.url} (webhooks ${env.STRIPE_WEBHOOK_URL ? `to ${env.STRIPE_WEBHOOK_URL}` : 'recorded, not sent'})`);

  const shutdown = () => {
    fake.close().then(
      () => process.exit(0),
      () => process.exit(1),
    );
  };
  process.once('SIGINT', shutdown);
  process.once('SIGTERM', shutdown);
}

main().catch((error: unknown) => {
  console.error(error instanceof Error ? error.message : error);
  process.exit(1);
});
