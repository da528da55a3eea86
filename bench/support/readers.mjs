/**
 * The load of the results-page benchmark, in a process of its own so that the benchmark's
 * own heap (the seeded demo, the app's modules) never pauses the readers for a garbage
 * collection: `readers` concurrent signed-in readers ask for `url`, each again as soon as
 * its page has arrived, on kept-alive node:http connections (one per reader, as browsers
 * keep theirs). First `warmUp` requests that are not counted, then `requests` that are.
 *
 * Usage: node bench/support/readers.mjs '{"url", "cookie", "mark", "readers", "requests", "warmUp"}'
 * Prints one JSON line: latencies in ms (sorted), failures (not a 200 containing `mark`),
 * requests per second, this process's CPU time per request, and from /proc/stat the share
 * of time the cores were busy and the share the hypervisor gave to other machines (steal).
 */
import http from 'node:http';
import { readFileSync } from 'node:fs';

const { url, cookie, mark, readers, requests, warmUp } = JSON.parse(process.argv[2]);
const agent = new http.Agent({ keepAlive: true, maxSockets: readers });
const wanted = Buffer.from(mark);

function get() {
  return new Promise((resolve, reject) => {
    http.get(url, { agent, headers: { Cookie: cookie } }, (response) => {
      const chunks = [];
      response.on('data', (chunk) => chunks.push(chunk));
      response.on('end', () => resolve({ status: response.statusCode ?? 0, body: Buffer.concat(chunks) }));
      response.on('error', reject);
    }).on('error', reject);
  });
}

async function load(count) {
  const latencies = [];
  let next = 0;
  let failures = 0;
  await Promise.all(Array.from({ length: readers }, async () => {
    while (next < count) {
      next += 1;
      const t0 = performance.now();
      try {
        const { status, body } = await get();
        latencies.push(performance.now() - t0);
        if (status !== 200 || !body.includes(wanted)) failures += 1;
      } catch {
        latencies.push(performance.now() - t0);
        failures += 1;
      }
    }
  }));
  return { latencies, failures };
}

const cpuTimes = () => readFileSync('/proc/stat', 'utf8').split('\n')[0].trim().split(/\s+/).slice(1).map(Number);

await load(warmUp);
const times0 = cpuTimes();
const cpu0 = process.cpuUsage();
const started = performance.now();
const { latencies, failures } = await load(requests);
const seconds = (performance.now() - started) / 1000;
const cpu = process.cpuUsage(cpu0);
const spent = cpuTimes().map((value, i) => value - times0[i]);
const total = spent.reduce((sum, value) => sum + value, 0);
agent.destroy();
latencies.sort((a, b) => a - b);
process.stdout.write(`${JSON.stringify({
  latencies,
  failures,
  perSecond: requests / seconds,
  generatorMs: (cpu.user + cpu.system) / 1000 / requests,
  busy: (total - spent[3] - spent[4]) / total,
  steal: spent[7] / total,
})}\n`);
