import { ilike, or, type AnyColumn, type SQL } from 'drizzle-orm';

/**
 * A search's text as a LIKE pattern that matches it anywhere, literally: `%`, `_` and the escape
 * character `\` (PostgreSQL's default LIKE escape) in what was typed match themselves, not any text.
 */
export const likeAnywhere = (text: string) => `%${text.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;

/** Rows where any of `columns` contains `text` (case-insensitive, literally); undefined for no text. */
export function containsText(columns: AnyColumn[], text: string | undefined): SQL | undefined {
  if (!text) return undefined;
  const pattern = likeAnywhere(text);
  return or(...columns.map((c) => ilike(c, pattern)));
}
