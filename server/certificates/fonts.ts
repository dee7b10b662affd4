/**
 * The certificate's fonts: Inter (text) and JetBrains Mono (numbers), both SIL OFL 1.1, read from
 * the @fontsource packages the client already bundles. pdfkit (through fontkit) reads WOFF and
 * embeds a subset of each font, so no font file is vendored. Only the latin subset is used; text
 * outside it is mapped to close ASCII forms by {@link fitToLatin}.
 */
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';

const require = createRequire(import.meta.url);

/** Font roles used by the renderer. */
export type FontRole = 'text' | 'textStrong' | 'mono' | 'monoStrong';

const FILES: Readonly<Record<FontRole, string>> = {
  text: '@fontsource/inter/files/inter-latin-400-normal.woff',
  textStrong: '@fontsource/inter/files/inter-latin-600-normal.woff',
  mono: '@fontsource/jetbrains-mono/files/jetbrains-mono-latin-400-normal.woff',
  monoStrong: '@fontsource/jetbrains-mono/files/jetbrains-mono-latin-600-normal.woff',
};

let cache: Record<FontRole, Buffer> | undefined;

/** The font files' bytes, read once. */
export function certificateFonts(): Readonly<Record<FontRole, Buffer>> {
  cache ??= Object.fromEntries(Object.entries(FILES).map(([role, spec]) => [role, readFileSync(require.resolve(spec))])) as Record<FontRole, Buffer>;
  return cache;
}

/**
 * Code points of the @fontsource "latin" subset (its unicode-range, from the package's
 * unicode.json): U+0000–00FF, U+0131, U+0152–0153, U+02BB–02BC, U+02C6, U+02DA, U+02DC, U+0304,
 * U+0308, U+0329, U+2000–206F, U+20AC, U+2122, U+2191, U+2193, U+2212, U+2215, U+FEFF, U+FFFD.
 */
const LATIN_RANGES: readonly [number, number][] = [
  [0x20, 0xff], [0x131, 0x131], [0x152, 0x153], [0x2bb, 0x2bc], [0x2c6, 0x2c6], [0x2da, 0x2da], [0x2dc, 0x2dc],
  [0x304, 0x304], [0x308, 0x308], [0x329, 0x329], [0x2000, 0x206f], [0x20ac, 0x20ac], [0x2122, 0x2122],
  [0x2191, 0x2191], [0x2193, 0x2193], [0x2212, 0x2212], [0x2215, 0x2215],
];

const SUBSTITUTES: Readonly<Record<string, string>> = {
  '₀': '0', '₁': '1', '₂': '2', '₃': '3', '₄': '4',
  '⁴': '^4', '≤': '<=', '≥': '>=', '≈': '~', '√': 'sqrt ', '∆': 'Delta ', 'Δ': 'Delta ',
  'Ω': 'ohm', 'μ': 'µ', '→': '->', '←': '<-', '✓': 'yes', '✗': 'no',
  'Ł': 'L', 'ł': 'l', 'Đ': 'D', 'đ': 'd', 'Ħ': 'H', 'ħ': 'h',
};

function inLatin(cp: number): boolean {
  return LATIN_RANGES.some(([a, b]) => cp >= a && cp <= b);
}

/**
 * Text that the latin subset can draw: NFC, known symbols spelled out (`inH₂O` → `inH2O`,
 * `≤` → `<=`), accents decomposed where the precomposed letter is missing, anything else `?`.
 * Tabs and line breaks are kept.
 */
export function fitToLatin(s: string): string {
  let out = '';
  for (const ch of s.normalize('NFC')) {
    const cp = ch.codePointAt(0)!;
    if (ch === '\n' || ch === '\t' || inLatin(cp)) out += ch;
    else if (SUBSTITUTES[ch] !== undefined) out += SUBSTITUTES[ch];
    else {
      // Letters such as ł or ő: keep the base letter when the decomposition fits.
      const base = ch.normalize('NFD').replace(/[\u0300-\u036f]/g, '');
      out += base && [...base].every((c) => inLatin(c.codePointAt(0)!)) ? base : '?';
    }
  }
  return out;
}
