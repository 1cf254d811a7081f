import { describe, expect, it } from 'vitest';
import { REJECT_REASONS, SOURCE_STATUS_KINDS, emptyRejectCounts, sourceStatusSchema } from './sourceStatus';
import { LineParser } from '../protocol/lineProtocol';
import { RejectCountsSchema, SourceStatusSchema } from '../../main/bridge/contract';

describe('reject reasons and source status, declared once', () => {
  it('counts every reason the parser can give, from zero', () => {
    const counts = emptyRejectCounts();
    expect(Object.keys(counts)).toEqual([...REJECT_REASONS]);
    expect(Object.values(counts).every((n) => n === 0)).toBe(true);
    // the parser's own tally is the same list, and the contract takes it as it is
    expect(Object.keys(new LineParser().rejected).sort()).toEqual([...REJECT_REASONS].sort());
    expect(RejectCountsSchema.safeParse(counts).success).toBe(true);
    // control: a count without one of the reasons is not a full tally
    const { checksum: _dropped, ...partial } = counts;
    expect(RejectCountsSchema.safeParse(partial).success).toBe(false);
  });

  it('gives the record reader and the contract the same status kinds, the contract with its size caps', () => {
    expect(SOURCE_STATUS_KINDS).toEqual(['connecting', 'connected', 'disconnected', 'reconnecting', 'stale', 'ended', 'error']);
    const status = { kind: 'reconnecting', attempt: 2, delay_ms: 500, detail: 'reopening /dev/ttyUSB0 in 0.50 s' } as const;
    expect(sourceStatusSchema().parse(status)).toEqual(status);
    expect(SourceStatusSchema.parse(status)).toEqual(status);
    const long = { kind: 'connecting', detail: 'x'.repeat(5000) } as const;
    expect(sourceStatusSchema().safeParse(long).success).toBe(true);
    expect(SourceStatusSchema.safeParse(long).success).toBe(false);
  });
});
