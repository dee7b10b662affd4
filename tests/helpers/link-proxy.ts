/**
 * A TCP proxy in front of a server whose link can be cut (every connection dropped and new ones
 * refused, as when the server is unreachable) or made one-way (the server's replies are swallowed,
 * as when acknowledgements are lost).
 */
import net from 'node:net';

export interface LinkProxy {
  url: string;
  /** Drops every connection and refuses new ones until {@link LinkProxy.restore}. */
  cut(): void;
  /** Lets bytes through to the server but swallows everything it sends back after its HTTP answer (the WebSocket handshake completes). */
  muteReplies(on: boolean): void;
  restore(): void;
  /** Points new connections at another server (one restarted on another port). */
  retarget(target: string): void;
  close(): Promise<void>;
}

export async function startLinkProxy(target: string): Promise<LinkProxy> {
  let t = new URL(target);
  let down = false;
  let mute = false;
  const pairs = new Set<{ a: net.Socket; b: net.Socket }>();
  const server = net.createServer((a) => {
    if (down) {
      a.destroy();
      return;
    }
    const b = net.connect(Number(t.port), t.hostname);
    const pair = { a, b };
    pairs.add(pair);
    a.on('data', (d) => b.write(d));
    let head = '';
    let answered = false;
    b.on('data', (d: Buffer) => {
      if (!answered) {
        head += d.toString('latin1');
        const i = head.indexOf('\r\n\r\n');
        if (i < 0) {
          a.write(d);
          return;
        }
        answered = true;
        // The HTTP answer goes through; anything after it in the same chunk is a WebSocket frame.
        const cut = d.length - (head.length - (i + 4));
        a.write(d.subarray(0, cut));
        if (!mute && cut < d.length) a.write(d.subarray(cut));
        return;
      }
      if (!mute) a.write(d);
    });
    const end = () => {
      pairs.delete(pair);
      a.destroy();
      b.destroy();
    };
    a.on('close', end);
    b.on('close', end);
    a.on('error', end);
    b.on('error', end);
  });
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', () => r()));
  const port = (server.address() as net.AddressInfo).port;
  const cut = () => {
    down = true;
    for (const p of pairs) {
      p.a.destroy();
      p.b.destroy();
    }
    pairs.clear();
  };
  return {
    url: `http://127.0.0.1:${port}`,
    cut,
    muteReplies(on) {
      mute = on;
    },
    restore() {
      down = false;
      mute = false;
    },
    retarget(next) {
      t = new URL(next);
    },
    async close() {
      cut();
      await new Promise<void>((r) => server.close(() => r()));
    },
  };
}
