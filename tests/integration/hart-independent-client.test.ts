/**
 * An independent HART client against `npm run sim`: its own frame builder, checksum and reply
 * parser written here from the frame layout as remembered from HCF_SPEC-081 / -127 (not read), and
 * nothing from Stillpoint's HART code (shared/protocol/hart, the driver) — so a mistake shared by
 * the product's encoder and decoder cannot hide. It opens the pseudo-terminal the running
 * simulator prints, at 1200 bit/s 8O1, and checks commands 0, 3 and 15.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtemp } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { SerialPort } from 'serialport';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ensureSocat } from '../helpers/socat';

const xor = (bytes: number[]): number => bytes.reduce((a, b) => a ^ b, 0);

/** Preambles, delimiter, address, command, byte count, data, checksum over delimiter..data. */
function buildRequest(address: number[], command: number, data: number[] = []): Buffer {
  const body = [address.length === 5 ? 0x82 : 0x02, ...address, command, data.length, ...data];
  return Buffer.from([0xff, 0xff, 0xff, 0xff, 0xff, ...body, xor(body)]);
}

interface Reply {
  command: number;
  responseCode: number;
  deviceStatus: number;
  data: Buffer;
  checksumOk: boolean;
}

/** Finds the first response (delimiter 0x06 or 0x86 after two or more 0xFF) in `bytes`; `undefined` until complete. */
function parseReply(bytes: Buffer): Reply | undefined {
  for (let i = 2; i < bytes.length; i += 1) {
    const d = bytes[i]!;
    if (bytes[i - 1] !== 0xff || bytes[i - 2] !== 0xff || (d !== 0x06 && d !== 0x86)) continue;
    const addressLength = d === 0x86 ? 5 : 1;
    const countAt = i + 1 + addressLength + 1;
    if (bytes.length <= countAt) return undefined;
    const count = bytes[countAt]!;
    const end = countAt + 1 + count; // index of the checksum
    if (bytes.length <= end) return undefined;
    const frame = [...bytes.subarray(i, end)];
    return {
      command: bytes[countAt - 1]!,
      responseCode: bytes[countAt + 1]!,
      deviceStatus: bytes[countAt + 2]!,
      data: bytes.subarray(countAt + 3, end),
      checksumOk: xor(frame) === bytes[end],
    };
  }
  return undefined;
}

async function ask(port: SerialPort, request: Buffer): Promise<Reply> {
  let received = Buffer.alloc(0);
  return new Promise<Reply>((resolve, reject) => {
    const timer = setTimeout(() => {
      port.off('data', onData);
      reject(new Error(`no complete reply in 2000 ms; got ${received.toString('hex')}`));
    }, 2000);
    const onData = (chunk: Buffer): void => {
      received = Buffer.concat([received, chunk]);
      const reply = parseReply(received);
      if (!reply) return;
      clearTimeout(timer);
      port.off('data', onData);
      resolve(reply);
    };
    port.on('data', onData);
    port.write(request);
  });
}

const available = await ensureSocat().catch(() => false);

describe('an independent HART client on the `npm run sim` pseudo-terminal', () => {
  let sim: ChildProcess;
  let port: SerialPort;
  let output = '';

  beforeAll(async () => {
    expect(available, 'socat is missing and could not be installed (run as root, or apt-get install socat)').toBe(true);
    const dir = await mkdtemp(path.join(os.tmpdir(), 'stillpoint-hart-client-'));
    // Its own process group, so stopping it ends npm, tsx and node together.
    sim = spawn('npm', ['run', 'sim', '--', '--dir', dir], { stdio: ['ignore', 'pipe', 'pipe'], detached: true });
    const hartPath = await new Promise<string>((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error(`npm run sim printed no hart device in 30 s:\n${output}`)), 30_000);
      const onData = (chunk: Buffer): void => {
        output += chunk.toString();
        const m = /^\s*hart\s+(\S+)\s+\(1200 bit\/s 8O1/m.exec(output);
        if (m?.[1]) {
          clearTimeout(timer);
          resolve(m[1]);
        }
      };
      sim.stdout?.on('data', onData);
      sim.stderr?.on('data', (c: Buffer) => (output += c.toString()));
      sim.once('exit', (code) => reject(new Error(`npm run sim exited with ${code}:\n${output}`)));
    });
    port = new SerialPort({ path: hartPath, baudRate: 1200, dataBits: 8, parity: 'odd', stopBits: 1, autoOpen: false });
    await new Promise<void>((resolve, reject) => port.open((e) => (e ? reject(e) : resolve())));
  }, 60_000);

  afterAll(async () => {
    if (port?.isOpen) await new Promise<void>((resolve) => port.close(() => resolve()));
    if (sim?.pid && sim.exitCode === null) {
      const exited = new Promise((r) => sim.once('exit', r));
      process.kill(-sim.pid, 'SIGTERM');
      await exited;
    }
  });

  let longAddress: number[] = [];

  it('command 0 at polling address 0 answers with a valid checksum and a unique identifier', async () => {
    const reply = await ask(port, buildRequest([0x80], 0));
    expect(reply).toMatchObject({ command: 0, responseCode: 0, checksumOk: true });
    expect(reply.data[0]).toBe(254);
    expect(reply.data.length).toBeGreaterThanOrEqual(12);
    // Long address: the low six bits of byte 1 with the primary-master bit, byte 2, the device id (bytes 9–11).
    longAddress = [0x80 | (reply.data[1]! & 0x3f), reply.data[2]!, reply.data[9]!, reply.data[10]!, reply.data[11]!];
    expect(reply.data.readUIntBE(9, 3)).toBe(0x00b2c7);
  });

  it('command 3 by long address gives the loop current and the PV (the rig rests at 0: 4 mA, 0 inH2O)', async () => {
    const reply = await ask(port, buildRequest(longAddress, 3));
    expect(reply).toMatchObject({ command: 3, responseCode: 0, checksumOk: true });
    expect(reply.data.readFloatBE(0)).toBeCloseTo(4, 3);
    expect(reply.data[4]).toBe(1); // unit code 1, inH2O at 68 °F (REFERENCE.md)
    expect(reply.data.readFloatBE(5)).toBeCloseTo(0, 2);
  });

  it('command 15 gives transfer function, range unit, URV, LRV, damping and write protect', async () => {
    const reply = await ask(port, buildRequest(longAddress, 15));
    expect(reply).toMatchObject({ command: 15, responseCode: 0, checksumOk: true });
    expect(reply.data[1]).toBe(0); // linear
    expect(reply.data[2]).toBe(1);
    expect(reply.data.readFloatBE(3)).toBe(100); // URV
    expect(reply.data.readFloatBE(7)).toBe(0); // LRV
    expect(reply.data.readFloatBE(11)).toBe(0); // damping, s
    expect(reply.data[15]).toBe(0); // not write protected
  });

  it('a request with a damaged checksum gets no answer', async () => {
    const bad = buildRequest(longAddress, 3);
    bad[bad.length - 1]! ^= 0xff;
    await expect(ask(port, bad)).rejects.toThrow(/no complete reply/);
  });
});
