import type { PDFFont } from 'pdf-lib';

// Characters the standard fonts' WinAnsiEncoding has beyond Latin-1 (cp1252 0x80-0x9F).
const WIN_ANSI_EXTRA = new Set('€‚ƒ„…†‡ˆ‰Š‹ŒŽ‘’“”•–—˜™š›œžŸ');
const REPLACEMENTS: Record<string, string> = { '\u2212': '-', '\u2010': '-', '\u2011': '-', '\u00a0': ' ', '\u2009': ' ' };

/**
 * Makes text drawable with pdf-lib's standard fonts, which only encode WinAnsi: control characters
 * become spaces, accents that WinAnsi lacks are dropped (NFKD), anything else becomes "?".
 */
export function toWinAnsi(text: string): string {
  let out = '';
  for (const ch of text) {
    const code = ch.codePointAt(0)!;
    if (REPLACEMENTS[ch] !== undefined) out += REPLACEMENTS[ch];
    else if (code < 0x20 || (code >= 0x7f && code < 0xa0)) out += ' ';
    else if (code < 0x7f || (code > 0xa0 && code <= 0xff) || WIN_ANSI_EXTRA.has(ch)) out += ch;
    else {
      const base = ch.normalize('NFKD').replace(/[\u0300-\u036f]/g, '');
      out += base && [...base].every((c) => c.codePointAt(0)! >= 0x20 && c.codePointAt(0)! < 0x7f) ? base : '?';
    }
  }
  return out;
}

/** Splits text into lines no wider than `maxWidth` at `size`; a single overlong word is cut with an ellipsis. */
export function wrapText(text: string, font: PDFFont, size: number, maxWidth: number): string[] {
  const lines: string[] = [];
  let line = '';
  for (const word of toWinAnsi(text).split(/\s+/).filter(Boolean)) {
    const candidate = line ? `${line} ${word}` : word;
    if (font.widthOfTextAtSize(candidate, size) <= maxWidth) {
      line = candidate;
      continue;
    }
    if (line) lines.push(line);
    line = fitText(word, font, size, maxWidth);
  }
  if (line) lines.push(line);
  return lines;
}

/** Shortens text with "..." until it fits `maxWidth`. */
export function fitText(text: string, font: PDFFont, size: number, maxWidth: number): string {
  const clean = toWinAnsi(text);
  if (font.widthOfTextAtSize(clean, size) <= maxWidth) return clean;
  let cut = clean;
  while (cut.length > 1 && font.widthOfTextAtSize(`${cut}...`, size) > maxWidth) cut = cut.slice(0, -1);
  return `${cut}...`;
}

/** Breaks text without spaces (file names) into at most `maxLines` lines by characters; the last is shortened with "...". */
export function breakChars(text: string, font: PDFFont, size: number, maxWidth: number, maxLines: number): string[] {
  const lines: string[] = [];
  let rest = toWinAnsi(text);
  while (rest && lines.length < maxLines - 1 && font.widthOfTextAtSize(rest, size) > maxWidth) {
    let n = 1;
    while (n < rest.length && font.widthOfTextAtSize(rest.slice(0, n + 1), size) <= maxWidth) n++;
    lines.push(rest.slice(0, n));
    rest = rest.slice(n);
  }
  if (rest) lines.push(fitText(rest, font, size, maxWidth));
  return lines;
}
