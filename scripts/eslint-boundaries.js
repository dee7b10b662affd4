// Import boundaries from HOUSE-STYLE.md, as a small local ESLint rule: resolve each
// relative import against the importing file and check which top-level area it lands in.
import path from 'node:path';

const root = path.resolve(import.meta.dirname, '..');

/** Area of a repo-relative path, e.g. "server/db/repositories/x.ts" -> that path. */
function rel(file) {
  return path.relative(root, file).split(path.sep).join('/');
}

const under = (p, dir) => p === dir || p.startsWith(dir + '/');

/**
 * Each rule: files it applies to, and a check returning a message or null.
 * `target` is the repo-relative resolved path of a relative import, or null for a package.
 */
const rules = [
  {
    applies: (f) => under(f, 'shared'),
    check: (t) => (t && !under(t, 'shared') ? 'shared/ imports nothing of ours outside shared/' : null),
  },
  {
    applies: (f) => under(f, 'src'),
    check: (t) => (t && (under(t, 'server') || under(t, 'simulators') || under(t, 'tests')) ? 'src/ never imports server/, simulators/ or tests/' : null),
  },
  {
    applies: (f) => under(f, 'server'),
    check: (t) => (t && under(t, 'src') ? 'server/ never imports src/' : null),
  },
  {
    applies: (f) => under(f, 'src/components') || under(f, 'src/lib') || under(f, 'src/stores'),
    check: (t) => (t && under(t, 'src/features') ? 'components/, lib/ and stores/ do not import features' : null),
  },
  {
    applies: (f) => under(f, 'src/features'),
    check: (t, f) => {
      if (!t || !under(t, 'src/features')) return null;
      const own = f.split('/')[2];
      return t.split('/')[2] !== own ? 'features do not import each other' : null;
    },
  },
  {
    applies: (f) => under(f, 'server/http') || under(f, 'server/ws'),
    check: (t) => (t && under(t, 'server/db') ? 'HTTP and WS reach data only through services' : null),
  },
  {
    applies: (f) => under(f, 'server/services') || under(f, 'server/http') || under(f, 'server/ws'),
    check: (t) => (t && under(t, 'simulators') ? 'services, HTTP and WS never import simulators/: the composition root (server/boot.ts) injects the rig' : null),
  },
  {
    applies: (f) => under(f, 'server/bench'),
    check: (t) =>
      t && (under(t, 'server/http') || under(t, 'server/ws') || under(t, 'server/db'))
        ? 'bench/ never touches HTTP, WS or the db'
        : null,
  },
];

const packageRules = [
  {
    test: (spec) => spec === 'serialport' || spec.startsWith('@serialport/'),
    allowed: (f) => under(f, 'server/bench/transport') || under(f, 'simulators') || under(f, 'tests') || under(f, 'bench'),
    message: 'only server/bench/transport imports serialport',
  },
  {
    test: (spec) => spec === 'drizzle-orm' || spec.startsWith('drizzle-orm/'),
    allowed: (f) => under(f, 'server/db'),
    message: 'only server/db (repositories, schema, client) imports drizzle',
  },
];

export const boundariesPlugin = {
  rules: {
    imports: {
      meta: { type: 'problem', schema: [] },
      create(context) {
        const file = rel(context.filename);
        const check = (node, spec) => {
          if (typeof spec !== 'string') return;
          if (spec.startsWith('.')) {
            const target = rel(path.resolve(path.dirname(context.filename), spec));
            for (const r of rules) {
              if (!r.applies(file)) continue;
              const msg = r.check(target, file);
              if (msg) context.report({ node, message: `${msg} (${spec})` });
            }
          } else {
            for (const p of packageRules) {
              if (p.test(spec) && !p.allowed(file)) context.report({ node, message: `${p.message} (${spec})` });
            }
          }
        };
        return {
          ImportDeclaration: (n) => check(n, n.source.value),
          ExportNamedDeclaration: (n) => n.source && check(n, n.source.value),
          ExportAllDeclaration: (n) => check(n, n.source.value),
          ImportExpression: (n) => n.source.type === 'Literal' && check(n, n.source.value),
        };
      },
    },
  },
};
