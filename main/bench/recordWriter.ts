/**
 * Every write to the run's record goes through here. A write that fails (disk full,
 * folder gone) is reported once, in one line, and the caller stops the run; what was
 * written before stays on disk and the reader recovers it.
 */
import type { RecordLine, RecordSink } from './benchDependencies';
import type { SourceEvent } from '../../acquisition/sources/sourceTypes';
import { oneLine } from './refusal';

export class RecordWriter {
  private sink: RecordSink | null = null;
  private failed = false;

  constructor(private readonly onFailure: (message: string, detail: string) => void) {}

  get path(): string | null {
    return this.sink?.path ?? null;
  }

  open(sink: RecordSink): void {
    this.sink = sink;
    this.failed = false;
  }

  write(fn: (sink: RecordSink) => void): void {
    const sink = this.sink;
    if (!sink || this.failed) return;
    try {
      fn(sink);
    } catch (err) {
      this.failed = true;
      this.onFailure(`the record ${sink.path} could not be written (${oneLine(err)}); the run was stopped, and every reading written before is kept.`, oneLine(err));
    }
  }

  event(line: RecordLine): void {
    this.write((s) => s.event(line));
  }

  sourceEvent(e: SourceEvent, t: number | null): void {
    this.write((s) => s.sourceEvent(e, t));
  }

  /** Closes the record; resolves to its path, or null when none was open. `warn` gets a failed close. */
  async close(stop: Parameters<RecordSink['close']>[0], warn: (message: string) => void): Promise<string | null> {
    const sink = this.sink;
    this.sink = null;
    if (!sink) return null;
    try {
      await sink.close(stop);
    } catch (err) {
      warn(`the record ${sink.path} could not be closed cleanly (${oneLine(err)}); it will be recovered when opened.`);
    }
    return sink.path;
  }
}
