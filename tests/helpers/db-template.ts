/**
 * The migrated database with the demo site seeded, made once and copied for every test server,
 * instead of each server running the migrations and seeding two years of demo history itself. It
 * is made by the same code a server runs at its first start (real migrations, real seed), once per
 * day (the demo history is dated from today), per migration set and seed code and per demo password,
 * into `.tmp/db-templates/`: a PGlite tarball for in-memory servers, and a PGlite data directory
 * (loaded from that tarball) for server processes, copied into their DATA_DIR.
 */
import { createHash, randomBytes } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { PGlite } from '@electric-sql/pglite';
import { openDatabase } from '../../server/db/client';
import { createServices } from '../../server/services';
import { seedDemo } from '../../server/demo/demo-seed';

const root = path.resolve(import.meta.dirname, '../..');
const DIR = path.join(root, '.tmp', 'db-templates');

/** Every file under `dir` (relative to the repository), sorted, for hashing. */
function filesUnder(dir: string): string[] {
  const abs = path.join(root, dir);
  if (!fs.existsSync(abs)) return [];
  if (!fs.statSync(abs).isDirectory()) return [dir];
  return fs
    .readdirSync(abs)
    .sort()
    .flatMap((f) => filesUnder(path.join(dir, f)));
}

/**
 * bcrypt cost of the template's password hashes: bcrypt's minimum, so a test's sign-in costs
 * milliseconds (a stored hash carries its cost, so servers at any PASSWORD_HASH_COST verify it).
 */
export const TEST_HASH_COST = 4;

/** Name of the template for today, this password, the hash cost and the code that makes it. */
function templateKey(password: string): string {
  const h = createHash('sha256');
  h.update(`${new Date().toISOString().slice(0, 10)}\0${password}\0${TEST_HASH_COST}\0`);
  const inputs = [...filesUnder('drizzle'), ...filesUnder('server/db/schema'), ...filesUnder('server/demo'), ...filesUnder('server/db/repositories')];
  for (const f of fs.readdirSync(path.join(root, 'server/services')).sort()) if (f.startsWith('demo') || f.startsWith('auth') || f.startsWith('audit')) inputs.push(`server/services/${f}`);
  for (const f of inputs) h.update(f).update(fs.readFileSync(path.join(root, f)));
  return h.digest('hex').slice(0, 24);
}

/** Writes `file` whole or not at all (parallel test processes may make the same template). */
function publish(tmp: string, final: string): void {
  try {
    fs.renameSync(tmp, final);
  } catch (e) {
    fs.rmSync(tmp, { recursive: true, force: true });
    if (!fs.existsSync(final)) throw e;
  }
}

/** The seeded template as a PGlite tarball (`dumpDataDir`), for in-memory servers (`boot({ template })`). */
export async function demoTemplate(password: string): Promise<Uint8Array> {
  const file = path.join(DIR, `${templateKey(password)}.tar`);
  if (fs.existsSync(file)) return new Uint8Array(fs.readFileSync(file));
  const database = await openDatabase({});
  try {
    const services = createServices(database, randomBytes(32));
    await seedDemo(database.db, services.audit, password, new Date(), TEST_HASH_COST);
    const bytes = await database.dump!();
    fs.mkdirSync(DIR, { recursive: true });
    const tmp = `${file}.${process.pid}.tmp`;
    fs.writeFileSync(tmp, bytes);
    publish(tmp, file);
    return bytes;
  } finally {
    await database.close();
  }
}

/** The seeded template as a PGlite data directory (loaded from the tarball); returns its path. */
export async function demoTemplateDir(password: string): Promise<string> {
  const dir = path.join(DIR, `${templateKey(password)}.pglite`);
  if (!fs.existsSync(dir)) {
    const bytes = await demoTemplate(password);
    const tmp = `${dir}.${process.pid}.tmp`;
    fs.rmSync(tmp, { recursive: true, force: true });
    const pg = new PGlite(tmp, { loadDataDir: new Blob([bytes.slice().buffer]) });
    await pg.waitReady;
    await pg.close();
    publish(tmp, dir);
  }
  return dir;
}

/**
 * Puts the seeded template into `dataDir` as its PGlite directory (`DATA_DIR/pglite`), so a server
 * process started there opens a migrated, seeded database as on any later start.
 */
export async function seedDataDir(dataDir: string, password: string): Promise<void> {
  const dir = await demoTemplateDir(password);
  fs.mkdirSync(dataDir, { recursive: true });
  fs.cpSync(dir, path.join(dataDir, 'pglite'), { recursive: true });
}
