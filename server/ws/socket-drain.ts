import type { WebSocket } from 'ws';

/**
 * Resolves once a page has been handed to the OS (`written`: the write callback of its last
 * message, which waits while the socket's kernel buffer is full) and the socket holds no more than
 * `lowWater` bytes (or is `gone`); false when that took longer than `stallMs` (the client does not
 * read). Yields to the event loop before resolving, so HTTP requests and live deliveries go in
 * between pages.
 */
export async function drained(ws: WebSocket, written: Promise<void>, o: { stallMs: number; lowWater: number; gone: () => boolean }): Promise<boolean> {
  let timer: NodeJS.Timeout | undefined;
  const stalled = new Promise<boolean>((resolve) => {
    timer = setTimeout(() => resolve(true), o.stallMs);
  });
  try {
    if (await Promise.race([written.then(() => false), stalled])) return false;
    const until = performance.now() + o.stallMs;
    while (!o.gone() && ws.bufferedAmount > o.lowWater) {
      if (performance.now() > until) return false;
      await new Promise((r) => setTimeout(r, 5));
    }
  } finally {
    clearTimeout(timer);
  }
  await new Promise((r) => setImmediate(r));
  return true;
}
