// For reference beside the Express baseline: node:http alone.
import http from 'node:http';

http
  .createServer((_req, res) => {
    res.writeHead(200, { 'content-type': 'text/plain' });
    res.end('hello world');
  })
  .listen(Number(process.env.PORT), '127.0.0.1', () => process.send?.('ready'));
