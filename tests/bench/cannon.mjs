/**
 * autocannon in its own process, so the load generator does not share the
 * server's event loop (in one process every request it fires takes time from
 * the server it measures). Used by the server benchmarks:
 *
 *   node tests/bench/cannon.mjs '{"url": "...", "connections": 50, "seconds": 10, "headers": {}, "rangeSearch": "/api/…&r.heightM="}'
 *
 * With `rangeSearch`, every request asks for another range (`<prefix>lo..hi`),
 * so no two requests in a run are alike; with `pages: {path, count}` the
 * requests walk pages 1…count of one search. Prints autocannon's result as JSON.
 */
import autocannon from 'autocannon';

const o = JSON.parse(process.argv[2]);
let n = 0;
const vary = o.rangeSearch
  ? () => `${o.rangeSearch}${40 + (n % 40)}..${200 + Math.floor(n++ / 40)}`
  : o.pages
    ? () => `${o.pages.path}&page=${1 + (n++ % o.pages.count)}`
    : null;
autocannon(
  {
    url: o.url,
    connections: o.connections,
    duration: o.seconds,
    headers: o.headers,
    requests: vary ? [{ setupRequest: (req) => ({ ...req, path: vary() }) }] : undefined,
  },
  (err, res) => {
    if (err) {
      console.error(err);
      process.exit(1);
    }
    process.stdout.write(JSON.stringify(res));
  },
);
