/**
 * One gzip stream fed a page at a time: each push is flushed (Z_SYNC_FLUSH) so the compressed
 * bytes of a page can be sent before the next page is read. Used by the PGlite worker for a trace
 * it builds and by the sample repository on a PostgreSQL server (where zlib runs on libuv's pool).
 */
import zlib from 'node:zlib';

export class GzipPages {
  private readonly gz: zlib.Gzip;
  private readonly out: Buffer[] = [];

  /** Level 1 by default: a trace's text is very repetitive, so the fastest level already shrinks it about tenfold. */
  constructor(level = 1) {
    this.gz = zlib.createGzip({ level });
    this.gz.on('data', (b: Buffer) => this.out.push(b));
  }

  private take(): Buffer {
    return Buffer.concat(this.out.splice(0));
  }

  /** Compresses `parts` and returns the output so far. */
  push(parts: Uint8Array[]): Promise<Buffer> {
    for (const p of parts) if (p.length) this.gz.write(p);
    return new Promise((resolve, reject) => {
      this.gz.once('error', reject);
      this.gz.flush(zlib.constants.Z_SYNC_FLUSH, () => {
        this.gz.off('error', reject);
        resolve(this.take());
      });
    });
  }

  /** Ends the stream after `tail` and returns the last bytes. */
  end(tail: Uint8Array): Promise<Buffer> {
    return new Promise((resolve, reject) => {
      this.gz.once('error', reject);
      this.gz.once('end', () => resolve(this.take()));
      this.gz.end(tail);
    });
  }

  /** Abandons the stream (the reader went away). */
  destroy(): void {
    this.gz.destroy();
  }
}
