// The product's own server for the benchmark, in its own process like production.
import { startServer } from '../../server/index';

startServer().then(() => process.send?.('ready'));
