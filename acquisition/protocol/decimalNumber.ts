/**
 * Numbers on the wire: a strict decimal scanner shared by the protocol parser and the
 * delimited reader. It accepts only plain decimals, so NaN, Infinity and hex never become
 * values, and it tells apart "not a number" from "a number that is not finite".
 */
import type { RejectReason } from '../sources/sourceTypes';

/** Why a token is not a number: 'malformed' (not numeric text) or 'nonFinite' (NaN, Infinity, overflow). */
const NOT_NUMBER = { reason: 'malformed' as RejectReason };

/** Why the last parseDecimal call gave NaN: 'malformed' or 'nonFinite'. */
export function lastNumberProblem(): 'malformed' | 'nonFinite' {
  return NOT_NUMBER.reason === 'nonFinite' ? 'nonFinite' : 'malformed';
}

/**
 * Strict decimal number: [+-]digits[.digits][(e|E)[+-]digits]. Returns the value, or
 * sets NOT_NUMBER.reason and returns NaN (the caller turns that into a rejection and
 * never passes it on).
 */
export function parseDecimal(s: string, from: number, to: number): number {
  let i = from;
  if (i < to && (s.charCodeAt(i) === 43 || s.charCodeAt(i) === 45)) i++;
  let digits = 0;
  while (i < to && isDigit(s.charCodeAt(i))) { i++; digits++; }
  if (i < to && s.charCodeAt(i) === 46) {
    i++;
    while (i < to && isDigit(s.charCodeAt(i))) { i++; digits++; }
  }
  if (digits === 0) {
    NOT_NUMBER.reason = looksNonFinite(s, from, to) ? 'nonFinite' : 'malformed';
    return NaN;
  }
  if (i < to && (s.charCodeAt(i) | 32) === 101) {
    i++;
    if (i < to && (s.charCodeAt(i) === 43 || s.charCodeAt(i) === 45)) i++;
    let e = 0;
    while (i < to && isDigit(s.charCodeAt(i))) { i++; e++; }
    if (e === 0) { NOT_NUMBER.reason = 'malformed'; return NaN; }
  }
  if (i !== to) { NOT_NUMBER.reason = 'malformed'; return NaN; }
  const v = Number(s.slice(from, to));
  if (!Number.isFinite(v)) { NOT_NUMBER.reason = 'nonFinite'; return NaN; }
  return v;
}

function isDigit(c: number): boolean {
  return c >= 48 && c <= 57;
}

/** nan, inf, infinity in any case, with an optional sign: what C printf and JS print for non-finite values. */
function looksNonFinite(s: string, from: number, to: number): boolean {
  let i = from;
  if (i < to && (s.charCodeAt(i) === 43 || s.charCodeAt(i) === 45)) i++;
  const word = s.slice(i, to).toLowerCase();
  return word === 'nan' || word === 'inf' || word === 'infinity';
}
