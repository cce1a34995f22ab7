// A recording proxy that forwards nothing: every request Chromium sends through it
// (plain HTTP requests and HTTPS CONNECT tunnels) is logged and answered 403. Chromium
// sends loopback addresses direct (its implicit bypass rule), so the page's own server is
// reached as usual and anything else the page or its workers ask for ends up in `log`.
import { createServer } from 'node:http';

export async function startRecordingProxy() {
  const log = [];
  const server = createServer((req, res) => {
    let host = req.headers.host ?? '';
    try { host = new URL(req.url).host; } catch { /* origin-form request: keep the Host header */ }
    log.push({ kind: 'request', method: req.method, host, url: req.url });
    res.writeHead(403, { 'content-type': 'text/plain' });
    res.end('blocked by the test proxy\n');
  });
  server.on('connect', (req, socket) => {
    log.push({ kind: 'connect', method: 'CONNECT', host: req.url, url: req.url });
    socket.on('error', () => {});
    socket.end('HTTP/1.1 403 Forbidden\r\ncontent-length: 0\r\n\r\n');
  });
  await new Promise((resolve) => server.listen(0, '127.0.0.1', resolve));
  return {
    port: server.address().port,
    log,
    /** Host name without the port. */
    hostOf: (entry) => entry.host.replace(/:\d+$/, '').replace(/^\[|\]$/g, ''),
    close: () => new Promise((resolve) => { server.closeAllConnections?.(); server.close(resolve); }),
  };
}
