/** Test helper: "FF 02 80" → bytes. */
export const hex = (text: string): Uint8Array => Uint8Array.from(text.trim().split(/\s+/).filter(Boolean), (b) => parseInt(b, 16));
