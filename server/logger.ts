/**
 * The process's one logger: pino, one JSON object per line with `level` (a
 * name: info, warn, error…), `time` (ISO 8601), `msg` and, while a request is
 * being served, its `reqId` (server/middlewares/request-id.ts keeps it in an
 * AsyncLocalStorage, so lines logged deep in a service carry it too).
 * LOG_LEVEL sets the level (silent under tests unless a test raises it).
 */
import { AsyncLocalStorage } from 'node:async_hooks';
import { isMainThread } from 'node:worker_threads';
import pino from 'pino';

/** The request being served on this async path (set by the request-id middleware). */
export const requestScope = new AsyncLocalStorage<{ reqId: string }>();

interface LineSink {
  write(line: string): unknown;
}
// Asynchronous: a request never waits on the terminal or pipe reading the log. Lines logged while a write
// is under way go out together in the next one; what is still buffered is written when the process exits
// (pino's on-exit-leak-free hook), so a SIGKILL loses at most that tail. A reader that stops reading makes
// the buffer stop at 16 MiB: later lines are dropped instead of filling the memory.
// Worker threads (which pino's exit hook does not cover, and which may be ended at any moment) write synchronously.
const stdout = pino.destination({ dest: 1, sync: !isMainThread, maxLength: 16 * 2 ** 20 });
let sink: LineSink = stdout;

/** Send log lines elsewhere (tests collect them); `null` goes back to stdout. */
export function setLogSink(next: LineSink | null) {
  sink = next ?? stdout;
}

export const logger = pino(
  {
    level: process.env.LOG_LEVEL ?? (process.env.NODE_ENV === 'test' || process.env.VITEST ? 'silent' : 'info'),
    timestamp: pino.stdTimeFunctions.isoTime,
    formatters: { level: (label) => ({ level: label }) },
    mixin() {
      const scope = requestScope.getStore();
      return scope ? { reqId: scope.reqId } : {};
    },
  },
  { write: (line: string) => sink.write(line) },
);
