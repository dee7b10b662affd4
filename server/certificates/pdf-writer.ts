/**
 * The PDF writer under the certificate: page geometry, palette, number formats and the layout
 * helpers (headings, paragraphs, label/value facts, tables that repeat their header across pages)
 * over one pdfkit document. Knows nothing of certificates.
 */
import { DEFAULT_TIME_ZONE, dpDecimals as sharedDpDecimals, formatDate, formatDateTime, formatFixed, formatNominal, unitLabel as sharedUnitLabel } from '../../shared/format';
import { fitToLatin, type FontRole } from './fonts';

export const PAGE = { width: 595.28, height: 841.89 }; // A4 in points
export const MARGIN = { top: 48, bottom: 72, left: 48, right: 48 };
export const CONTENT_W = PAGE.width - MARGIN.left - MARGIN.right;
export const BOTTOM = PAGE.height - MARGIN.bottom;

/** Our palette: slate ink, a calm teal accent, muted state colours. */
export const COLOR = {
  ink: '#0f172a',
  muted: '#475569',
  faint: '#94a3b8',
  rule: '#cbd5e1',
  headFill: '#f1f5f9',
  zebra: '#f8fafc',
  accent: '#0f766e',
  pass: '#0f766e',
  conditional: '#a16207',
  fail: '#b91c1c',
  draft: '#fef3c7',
};

/**
 * Numbers: the one rule of shared/format — U+2212 minus (the fonts' latin subset carries it), + on
 * signed values, never a negative or signed zero — at fixed decimals.
 */
export function num(n: number | null | undefined, decimals: number, signed = false): string {
  return formatFixed(n, decimals, { signed });
}

/** Decimals for DP values: shared/format's rule (last digit ≤ 0.01 % of span), the same as the screens. */
export const dpDecimals = sharedDpDecimals;

/** Nominal % without trailing zeros: 6.25, 10, 56.25. */
export function nominal(n: number): string {
  return formatNominal(n);
}

/** The unit's one spelling (shared/format). */
export function unitLabel(unit: string): string {
  return sharedUnitLabel(unit);
}

/** A date-time in the site's zone with its UTC offset: `2025-03-17 08:02 UTC`, `2025-03-17 09:02 UTC+1`. */
export function dateTime(iso: string, zone: string = DEFAULT_TIME_ZONE): string {
  const s = formatDateTime(iso, zone, { withZone: true });
  return s === '—' ? iso : s;
}

/** A calendar date; an instant gives its date in the site's zone. */
export function dateOnly(iso: string, zone: string = DEFAULT_TIME_ZONE): string {
  const s = formatDate(iso, zone);
  return s === '—' ? iso : s;
}

export interface Column {
  header: string;
  width: number;
  align?: 'left' | 'right' | 'center';
  mono?: boolean;
}

export interface Cell {
  text: string;
  color?: string;
  strong?: boolean;
}

export type Doc = PDFKit.PDFDocument;

/** Layout helpers over one pdfkit document. */
export class Writer {
  constructor(readonly doc: Doc) {}

  font(role: FontRole, size: number, color = COLOR.ink): Doc {
    return this.doc.font(role).fontSize(size).fillColor(color);
  }

  /** Start a new page when fewer than `h` points remain. */
  ensure(h: number): void {
    if (this.doc.y + h > BOTTOM) this.doc.addPage();
  }

  gap(h: number): void {
    this.doc.y += h;
  }

  /** A section heading, moved to the next page unless `keep` points fit below it. */
  heading(text: string, keep = 60): void {
    this.ensure(keep);
    this.gap(10);
    const y = this.doc.y;
    this.font('textStrong', 10.5, COLOR.accent).text(fitToLatin(text), MARGIN.left, y, { width: CONTENT_W });
    this.doc.moveTo(MARGIN.left, this.doc.y + 1).lineTo(PAGE.width - MARGIN.right, this.doc.y + 1).lineWidth(0.5).strokeColor(COLOR.rule).stroke();
    this.doc.y += 5;
  }

  paragraph(text: string, opts: { strong?: boolean; size?: number; color?: string } = {}): void {
    const size = opts.size ?? 8.5;
    const t = fitToLatin(text);
    this.font(opts.strong ? 'textStrong' : 'text', size, opts.color ?? COLOR.ink);
    // Keep a paragraph on one page when it fits on one; pdfkit flows longer ones on.
    this.ensure(Math.min(this.doc.heightOfString(t, { width: CONTENT_W, lineGap: 1.5 }), BOTTOM - MARGIN.top));
    this.doc.text(t, MARGIN.left, this.doc.y, { width: CONTENT_W, lineGap: 1.5 });
    this.gap(3);
  }

  /** Label / value pairs in two columns; values may be set in mono. */
  facts(rows: [string, string, boolean?][]): void {
    const colW = CONTENT_W / 2;
    const labelW = 92;
    for (let i = 0; i < rows.length; i += 2) {
      const pair = rows.slice(i, i + 2);
      const heights = pair.map(([label, value, mono]) => {
        this.font(mono ? 'mono' : 'text', 8.5);
        const hv = this.doc.heightOfString(fitToLatin(value), { width: colW - labelW - 8 });
        this.font('text', 7.5);
        return Math.max(hv, this.doc.heightOfString(fitToLatin(label), { width: labelW - 4 }));
      });
      const h = Math.max(...heights) + 4;
      this.ensure(h);
      const y = this.doc.y;
      pair.forEach(([label, value, mono], j) => {
        const x = MARGIN.left + j * colW;
        this.font('text', 7.5, COLOR.muted).text(fitToLatin(label), x, y + 1, { width: labelW - 4 });
        this.font(mono ? 'mono' : 'text', 8.5).text(fitToLatin(value), x + labelW, y, { width: colW - labelW - 8 });
      });
      this.doc.x = MARGIN.left;
      this.doc.y = y + h;
    }
  }

  /** A table with a shaded header row, repeated after a page break. */
  table(columns: Column[], rows: Cell[][], size = 8): void {
    const pad = 3;
    const headerHeight = () => {
      this.font('textStrong', 7);
      return Math.max(...columns.map((c) => this.doc.heightOfString(fitToLatin(c.header), { width: c.width - 2 * pad }))) + 2 * pad;
    };
    const drawHeader = () => {
      const h = headerHeight();
      const y = this.doc.y;
      this.doc.rect(MARGIN.left, y, CONTENT_W, h).fill(COLOR.headFill);
      let x = MARGIN.left;
      for (const c of columns) {
        this.font('textStrong', 7, COLOR.muted).text(fitToLatin(c.header), x + pad, y + pad, { width: c.width - 2 * pad, align: c.align ?? 'left' });
        x += c.width;
      }
      this.doc.y = y + h;
    };
    const rowHeight = (row: Cell[]) =>
      Math.max(
        ...row.map((cell, i) => {
          const c = columns[i]!;
          this.font(c.mono ? (cell.strong ? 'monoStrong' : 'mono') : cell.strong ? 'textStrong' : 'text', size);
          return this.doc.heightOfString(fitToLatin(cell.text), { width: c.width - 2 * pad });
        }),
      ) +
      2 * pad;

    // Keep the header with at least a few rows.
    this.ensure(headerHeight() + rows.slice(0, 4).reduce((h, row) => h + rowHeight(row), 0) + 4);
    drawHeader();
    rows.forEach((row, r) => {
      const h = rowHeight(row);
      if (this.doc.y + h > BOTTOM) {
        this.doc.addPage();
        drawHeader();
      }
      const y = this.doc.y;
      if (r % 2 === 1) this.doc.rect(MARGIN.left, y, CONTENT_W, h).fill(COLOR.zebra);
      let x = MARGIN.left;
      row.forEach((cell, i) => {
        const c = columns[i]!;
        const role: FontRole = c.mono ? (cell.strong ? 'monoStrong' : 'mono') : cell.strong ? 'textStrong' : 'text';
        this.font(role, size, cell.color ?? COLOR.ink).text(fitToLatin(cell.text), x + pad, y + pad, { width: c.width - 2 * pad, align: c.align ?? 'left' });
        x += c.width;
      });
      this.doc.y = y + h;
    });
    this.doc
      .moveTo(MARGIN.left, this.doc.y)
      .lineTo(PAGE.width - MARGIN.right, this.doc.y)
      .lineWidth(0.5)
      .strokeColor(COLOR.rule)
      .stroke();
    this.doc.x = MARGIN.left;
    this.gap(4);
  }
}

