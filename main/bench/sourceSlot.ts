/**
 * The one source the bench service holds at a time: opened with its listeners
 * attached (a replay's recorded events too), closed with them detached, and asked for
 * commands with a refusal the user can read when there is none or it says no.
 */
import type { RunEvent } from '../../acquisition/record/runRecordFormat';
import type { RecordedFitSettings } from '../../acquisition/record/recordTimeZero';
import type { ReadingSource, SourceCommand, SourceEvent } from '../../acquisition/sources/sourceTypes';
import { Refusal } from './refusal';
import { listenToSource } from '../../acquisition/sources/replaySource';

export class SourceSlot {
  private source: ReadingSource | null = null;
  private detach: (() => void) | null = null;

  get isOpen(): boolean {
    return this.source !== null;
  }

  /** What a replayed record says of itself (its time zero, its fit settings), or null for a live source. */
  get recorded(): { recordedTimeZero_s: number | null; recordedFitSettings: RecordedFitSettings | null } | null {
    const s = this.source as Partial<{ recordedTimeZero_s: number | null; recordedFitSettings: RecordedFitSettings | null }> | null;
    if (!s || !('recordedTimeZero_s' in s) || s.recordedTimeZero_s === undefined) return null;
    return { recordedTimeZero_s: s.recordedTimeZero_s, recordedFitSettings: s.recordedFitSettings ?? null };
  }

  /** Creates, subscribes and opens a source; on failure nothing is left open and the error is rethrown. */
  async open(
    create: () => ReadingSource | Promise<ReadingSource>,
    onEvent: (e: SourceEvent) => void,
    onRecorded: (e: RunEvent) => void,
  ): Promise<void> {
    try {
      const source = await create();
      this.detach = listenToSource(source, onEvent, onRecorded);
      this.source = source;
      await source.open();
    } catch (err) {
      await this.close();
      throw err;
    }
  }

  async close(): Promise<void> {
    const source = this.source;
    this.source = null;
    this.detach?.();
    this.detach = null;
    if (source) await source.close().catch(() => undefined);
  }

  /** A command the user asked for: a refusal names `what` and the reason. */
  async command(cmd: SourceCommand, what: string): Promise<void> {
    if (!this.source) throw new Refusal(`${what}: no instrument is connected; press connect first.`);
    const r = await this.source.command(cmd);
    if (!r.ok) throw new Refusal(`${what}: ${r.error}`);
  }

  /** A command on the way out (stop): a failure changes nothing the user can act on. */
  async commandQuietly(cmd: SourceCommand): Promise<void> {
    await this.source?.command(cmd).catch(() => undefined);
  }
}
