/**
 * Host→device commands with their answers matched by sequence number (PROTOCOL.md):
 * a command resolves when its `ok` or `no` comes back, or fails after a timeout, so a
 * lost line never hangs the caller.
 */
import { formatCommand, type DeviceCommand } from './lineFormat';
import type { AnswerLine } from './readingAssembler';

export type CommandResult = { ok: true } | { ok: false; error: string };

export class CommandChannel {
  private seq = 0;
  private readonly pending = new Map<number, { verb: string; done: (r: CommandResult) => void; timer: ReturnType<typeof setTimeout> }>();

  constructor(private readonly timeout_ms = 2000) {}

  /** Writes the command through `write` and waits for its answer. */
  send(cmd: DeviceCommand, write: (line: string) => void, blankDuration_s?: number): Promise<CommandResult> {
    const seq = ++this.seq;
    const line = formatCommand(seq, cmd, blankDuration_s);
    return new Promise<CommandResult>((resolve) => {
      const timer = setTimeout(() => {
        this.pending.delete(seq);
        resolve({ ok: false, error: `the device did not answer "${line.slice(0, line.indexOf(' ^'))}" within ${this.timeout_ms / 1000} s` });
      }, this.timeout_ms);
      this.pending.set(seq, { verb: line.split(' ')[2]!, done: resolve, timer });
      try {
        write(line);
      } catch (err) {
        clearTimeout(timer);
        this.pending.delete(seq);
        resolve({ ok: false, error: `could not send the command: ${err instanceof Error ? err.message : String(err)}` });
      }
    });
  }

  /** An `ok` or `no` line from the device. Answers to nothing pending (late, duplicated) are ignored. */
  answer(a: AnswerLine): void {
    const p = this.pending.get(a.seq);
    if (!p) return;
    clearTimeout(p.timer);
    this.pending.delete(a.seq);
    p.done(a.ok ? { ok: true } : { ok: false, error: `the device refused "${p.verb}": ${a.reason}` });
  }

  /** Fails every pending command (the port closed). */
  failAll(reason: string): void {
    for (const [seq, p] of this.pending) {
      clearTimeout(p.timer);
      p.done({ ok: false, error: reason });
      this.pending.delete(seq);
    }
  }
}
