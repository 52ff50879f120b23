// The reference: Express with no middleware at all, answering a hello world.
import express from 'express';

const app = express();
app.get('/', (_req, res) => {
  res.send('hello world');
});
app.listen(Number(process.env.PORT), '127.0.0.1', () => process.send?.('ready'));
