// The product's own server for the benchmark, in its own process like production.
import { startServer } from '../../server/index';

startServer().then(({ shutdown }) => {
  process.once('SIGTERM', () => void shutdown().finally(() => process.exit(0)));
  process.send?.('ready');
});
