/**
 * Text bound for a terminal, made safe: a file name, a cell of a CSV, a sample name or a
 * note can hold control characters (an escape sequence that recolours the terminal,
 * retitles its window or moves the cursor over what was printed) and the bidirectional
 * controls that make text display in another order than it reads. Every such character
 * is shown as its escape (\u001b, \u202e) instead of being obeyed. Line breaks and tabs of
 * our own messages and reports stay. The escape is JSON's own, so JSON output stays valid
 * JSON meaning the same text (JSON.stringify already escapes the C0 controls this way).
 */

// C0 controls but tab and line feed, DEL, C1 controls, and the bidirectional embeddings, overrides and isolates.
const UNSAFE = /[\u0000-\u0008\u000b-\u001f\u007f-\u009f\u200e\u200f\u202a-\u202e\u2066-\u2069]/g;

export function terminalSafe(text: string): string {
  return text.replace(UNSAFE, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`);
}

/** Makes every string written to `stream` terminal-safe, for the life of the process (the command's edge). */
export function guardTerminal(stream: NodeJS.WriteStream): void {
  const write = stream.write.bind(stream) as (chunk: unknown, ...rest: unknown[]) => boolean;
  stream.write = ((chunk: unknown, ...rest: unknown[]) => write(typeof chunk === 'string' ? terminalSafe(chunk) : chunk, ...rest)) as typeof stream.write;
}
