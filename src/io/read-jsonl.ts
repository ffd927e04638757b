/**
 * JSON Lines, line by line: the one splitter that the n-best and gold
 * readers share. Yields each non-blank line with its 1-based number (a byte
 * order mark at the start of the file is dropped), and each line that is not
 * valid UTF-8 as a bad line, so a bad byte costs one record. Parsing the JSON
 * is the caller's (each reader checks its own record shape).
 */
import { decodeText, type BadLine } from './open-input.js';

export type JsonLine = { line: number; text: string; bad?: undefined } | { line: number; bad: BadLine; text?: undefined };

export async function* jsonLines(chunks: AsyncIterable<Buffer>): AsyncGenerator<JsonLine> {
  let partial = '';
  let line = 1;
  let first = true;
  for await (const piece of decodeText(chunks)) {
    const badAt = piece.bad.length ? new Map(piece.bad.map((b) => [b.line, b])) : null;
    let text = partial + piece.text;
    if (first && text.length > 0) {
      if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
      first = false;
    }
    let s = 0;
    for (let e = text.indexOf('\n'); e >= 0; e = text.indexOf('\n', s)) {
      const b = badAt?.get(line);
      if (b) yield { line, bad: b };
      else if (!blank(text, s, e)) yield { line, text: text.slice(s, e) };
      s = e + 1;
      line++;
    }
    partial = text.slice(s);
  }
  if (!blank(partial, 0, partial.length)) yield { line, text: partial };
}

function blank(text: string, from: number, to: number): boolean {
  for (let i = from; i < to; i++) {
    const c = text.charCodeAt(i);
    if (c !== 32 && c !== 9 && c !== 13) return false;
  }
  return true;
}
