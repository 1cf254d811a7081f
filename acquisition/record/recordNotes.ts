/**
 * Notes added to a run after it was recorded. The record itself is never rewritten, so
 * such notes live in a sidecar beside it (run.jsonl → run.notes.jsonl), also JSON Lines
 * and also append-only.
 */
import { existsSync, readFileSync } from 'node:fs';
import { appendJsonLine } from './appendLine';
import { isoWithLocalOffset, sidecarNoteSchema, type SidecarNote } from './runRecordFormat';
import { RunRecordError } from './journalReader';

export function sidecarPath(recordPath: string): string {
  return recordPath.endsWith('.jsonl') ? recordPath.slice(0, -'.jsonl'.length) + '.notes.jsonl' : recordPath + '.notes.jsonl';
}

/** Appends one note to the sidecar (creating it if needed) and fsyncs it. */
export function appendNote(recordPath: string, note: { note: string; author?: string | null; t?: number | null }, now: Date = new Date()): SidecarNote {
  if (!existsSync(recordPath)) {
    throw new RunRecordError(`${recordPath}: no such run record, so no note can be added to it; check the name.`, recordPath, null);
  }
  const entry = sidecarNoteSchema.parse({ wall: isoWithLocalOffset(now), author: note.author ?? null, t: note.t ?? null, note: note.note });
  const path = sidecarPath(recordPath);
  appendJsonLine(path, entry, 'the note');
  return entry;
}

/** The notes beside a record, oldest first; none when there is no sidecar. A torn last line is skipped. */
export function readNotes(recordPath: string): SidecarNote[] {
  const path = sidecarPath(recordPath);
  if (!existsSync(path)) return [];
  const text = readFileSync(path, 'utf8');
  const lines = text.split('\n');
  const notes: SidecarNote[] = [];
  lines.forEach((line, i) => {
    if (line.trim() === '') return;
    const torn = i === lines.length - 1; // no line end after it
    let value: unknown;
    try {
      value = JSON.parse(line);
    } catch {
      if (torn) return;
      throw new RunRecordError(`${path} line ${i + 1}: not valid JSON; repair or remove that line.`, path, i + 1);
    }
    const parsed = sidecarNoteSchema.safeParse(value);
    if (!parsed.success) {
      if (torn) return;
      throw new RunRecordError(`${path} line ${i + 1}: not a valid note (${parsed.error.issues[0]?.message}); repair or remove that line.`, path, i + 1);
    }
    notes.push(parsed.data);
  });
  return notes;
}
