import type { Response } from 'express';

/**
 * Writes a body that arrives in pieces, honouring the socket's back-pressure. The first piece is
 * awaited before the status line goes out, so an error there still reaches the error handler as a
 * proper status; an error after that cuts the connection (a truncated body, never a body that looks
 * whole). A client that goes away stops the pieces. The next piece is made while one is written.
 */
export async function streamPieces(res: Response, type: string, pieces: AsyncGenerator<Buffer>): Promise<void> {
  const first = await pieces.next();
  res.type(type);
  if (first.done) {
    res.end();
    return;
  }
  let closed = false;
  const onClose = () => (closed = true);
  res.on('close', onClose);
  try {
    let chunk: IteratorResult<Buffer> = first;
    while (!chunk.done && !closed) {
      // The next piece is made while this one drains to the socket.
      const next = pieces.next();
      if (!res.write(chunk.value)) await drainOrClose(res);
      chunk = await next;
    }
    if (closed) await pieces.return(undefined);
    else res.end();
  } catch (e) {
    res.destroy(e as Error);
  } finally {
    res.off('close', onClose);
  }
}

function drainOrClose(res: Response): Promise<void> {
  return new Promise((resolve) => {
    const done = () => {
      res.off('drain', done);
      res.off('close', done);
      resolve();
    };
    res.on('drain', done);
    res.on('close', done);
  });
}
