/**
 * One declaration each for what a source reports about itself: why a line was refused
 * (the reject reasons, counted by reason everywhere: parser, sources, recorder, record,
 * bench service, screen), the source's status, and the device's identity. Zod schemas,
 * with the TypeScript types inferred from them. The bridge contract builds its schemas
 * from these with its own size caps on text (`sourceStatusSchema(shortText, note)`); a
 * run record's reader takes the status kinds from here.
 */
import { z } from 'zod';

/** Why a line from the instrument was refused. */
export const REJECT_REASONS = [
  'checksum', 'malformed', 'overlong', 'nonFinite', 'timeBackwards', 'unitChange', 'binaryNoise', 'unknownType',
  /** Device time leaping far ahead of the time that passed on the host (acquisition/protocol/deviceTimeLine.ts). */
  'timeJump',
  /** An absorbance outside what any photometer reads (READABLE_RANGE_AU in acquisition/protocol/absorbance.ts). */
  'absorbanceRange',
] as const;
export const RejectReasonSchema = z.enum(REJECT_REASONS);
export type RejectReason = z.infer<typeof RejectReasonSchema>;

/** Refused lines so far, by reason. */
export type RejectCounts = Record<RejectReason, number>;

export function emptyRejectCounts(): RejectCounts {
  return Object.fromEntries(REJECT_REASONS.map((r) => [r, 0])) as RejectCounts;
}

/** Who the device says it is; `text` bounds each field where the schema guards a boundary. */
export function deviceIdentitySchema(text: z.ZodString = z.string()) {
  return z.object({
    maker: text, model: text, serial: text, firmware: text,
    /** Whether the device sends raw counts (so a blank must be taken) or absorbance. */
    sends: z.enum(['absorbance', 'counts']),
  });
}
export type DeviceIdentity = z.infer<ReturnType<typeof deviceIdentitySchema>>;

/** A source's status; `detail` and `message` bound the sentences where the schema guards a boundary. */
export function sourceStatusSchema(detail: z.ZodString = z.string(), message: z.ZodString = z.string()) {
  const count = z.number().int().min(0);
  return z.discriminatedUnion('kind', [
    z.object({ kind: z.literal('connecting'), detail }),
    z.object({ kind: z.literal('connected'), detail, identity: deviceIdentitySchema(detail).optional() }),
    z.object({ kind: z.literal('disconnected'), detail }),
    z.object({ kind: z.literal('reconnecting'), attempt: count, delay_ms: z.number(), detail }),
    z.object({ kind: z.literal('stale'), sinceLastReading_ms: z.number(), detail }),
    z.object({ kind: z.literal('ended'), detail }),
    z.object({ kind: z.literal('error'), message }),
  ]);
}
export type SourceStatus = z.infer<ReturnType<typeof sourceStatusSchema>>;
export type SourceStatusKind = SourceStatus['kind'];

export const SOURCE_STATUS_KINDS = sourceStatusSchema().options.map((o) => o.shape.kind.value) as [SourceStatusKind, ...SourceStatusKind[]];
