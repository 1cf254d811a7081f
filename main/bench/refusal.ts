/**
 * A request the service refuses for a reason the user can act on. Its message is the
 * one line the screen shows (what, where, what to do); anything else thrown is a fault
 * of ours and is reported as "<request> failed: …".
 */
export class Refusal extends Error {
  override readonly name = 'Refusal';
}

/** The first line of an error's message, capped: what a user is shown. */
export function oneLine(err: unknown): string {
  const s = err instanceof Error ? err.message : String(err);
  return s.split('\n')[0]!.slice(0, 300);
}
