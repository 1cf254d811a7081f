/**
 * From parsed protocol lines to source events: the part every protocol-speaking source
 * shares (serial and simulated). It holds the blank reference, turns counts into
 * absorbance, keeps device time increasing across a device restart, and watches the
 * cell temperature. It never emits a non-finite absorbance.
 */
import type { DeviceLine } from './lineProtocol';
import type { DeviceIdentity, Reading, RejectCounts, RejectReason, SourceEvent } from '../sources/sourceTypes';
import { ReadingFlag } from '../sources/sourceTypes';
import {
  absorbanceFromCounts, analyzeBlank, readableAbsorbanceProblem, DEFAULT_BASELINE_RULES, DEFAULT_COUNTS_LIMITS,
  type BaselineRules, type BlankReference, type CountsLimits,
} from './absorbance';

export interface AssemblerOptions {
  limits?: CountsLimits;
  baseline?: BaselineRules;
  /**
   * Warn when the cell temperature moves more than this from where the run started.
   * 0.5 K by default: common practice for kinetics, since k changes by several per cent per kelvin.
   */
  temperatureDriftLimit_K?: number;
  /** A blank taken at another wavelength does not serve: tolerance in nm. */
  blankWavelengthTolerance_nm?: number;
}

export interface AnswerLine {
  ok: boolean;
  seq: number;
  verb: string;
  reason: string;
}

export class ReadingAssembler {
  identity: DeviceIdentity | null = null;
  blank: BlankReference | null = null;
  /** Sample lines that could not become readings because no blank had been taken. */
  awaitingBlank = 0;
  /** Readings emitted. */
  readings = 0;
  private readonly limits: CountsLimits;
  private readonly rules: BaselineRules;
  private readonly driftLimit_K: number;
  private readonly wlTolerance_nm: number;
  private blankT: number[] = [];
  private blankS: number[] = [];
  private blankD: (number | null)[] = [];
  private blankWl = 0;
  private timeOffset_s = 0;
  private lastDeviceTime_s: number | null = null;
  private lastHost_ms = 0;
  private lastRawTime_s: number | null = null;
  private restartCheck = false;
  private referenceTemp_C: number | null = null;
  private temperatureOut = false;
  private problemsReported = 0;
  private awaitingWhy = '';
  /** Refusals said as warnings so far, by reason (the ones a person must hear of, not only see counted). */
  private readonly refusalsSaid = new Map<string, number>();

  constructor(
    private readonly emit: (e: SourceEvent) => void,
    private readonly onAnswer: (a: AnswerLine) => void = () => undefined,
    options: AssemblerOptions = {},
  ) {
    this.limits = options.limits ?? DEFAULT_COUNTS_LIMITS;
    this.rules = options.baseline ?? DEFAULT_BASELINE_RULES;
    this.driftLimit_K = options.temperatureDriftLimit_K ?? 0.5;
    this.wlTolerance_nm = options.blankWavelengthTolerance_nm ?? 0.5;
  }

  /** Start the temperature watch from this value instead of the first one reported. */
  setReferenceTemperature(t_C: number | null): void {
    this.referenceTemp_C = t_C;
    this.temperatureOut = false;
  }

  accept(line: DeviceLine, raw: string, hostTime_ms: number, counts: RejectCounts): void {
    if (line.kind !== 'counts' || !line.blank) this.finishBlank();
    switch (line.kind) {
      case 'empty': return;
      case 'rejected':
        this.refused(line.reason, line.detail, raw, counts);
        return;
      case 'identity':
        // A device answers `who` with its identity, and sends it when it starts. Only a clock that
        // then goes backwards means a restart (see reading()).
        this.identity = line.identity;
        this.restartCheck = true;
        return;
      case 'ack':
      case 'nak':
        this.onAnswer({ ok: line.kind === 'ack', seq: line.seq, verb: line.verb, reason: line.kind === 'nak' ? line.reason : '' });
        return;
      case 'spectrum':
        this.emit({ type: 'spectrum', frame: { ...line.frame, deviceTime_s: line.frame.deviceTime_s + this.timeOffset_s } });
        return;
      case 'temperature':
        this.watchTemperature(line.cellTemperature_C);
        return;
      case 'absorbance': {
        let flags = line.flags;
        if (line.absorbance > this.limits.reliableLimit_AU) flags |= ReadingFlag.beyondRange;
        this.reading(line.deviceTime_s, hostTime_ms, line.absorbance, line.wavelength_nm, line.cellTemperature_C, flags);
        return;
      }
      case 'counts':
        if (line.blank) {
          if (this.blankT.length === 0) this.blankWl = line.wavelength_nm;
          this.blankT.push(line.deviceTime_s);
          this.blankS.push(line.sampleCounts);
          this.blankD.push(line.darkCounts);
          return;
        }
        this.countsReading(line, hostTime_ms, raw, counts);
        return;
    }
  }

  /**
   * A refused line: counted (the tally is the reader's; the assembler adds what it refuses
   * itself) and reported. A device time that leapt ahead, or an absorbance no photometer
   * reads, is also said in words, the first time and every hundredth: either means the
   * instrument or the line is sending garbage that looks like readings.
   */
  private refused(reason: RejectReason, detail: string, raw: string, counts: RejectCounts): void {
    this.emit({ type: 'rejected', reason, line: raw.length > 200 ? raw.slice(0, 200) + '…' : raw, counts: { ...counts } });
    if (reason !== 'timeJump' && reason !== 'absorbanceRange') return;
    const said = (this.refusalsSaid.get(reason) ?? 0) + 1;
    this.refusalsSaid.set(reason, said);
    if (said !== 1 && said % 100 !== 0) return;
    const what = reason === 'timeJump'
      ? `${detail}: the line was left out and the run keeps its time line`
      : `${detail}: the line was left out`;
    this.emit({ type: 'warning', message: `${what} (${counts[reason]} such line(s) so far); if this goes on, check the instrument and its cable` });
  }

  /** Closes a blank in progress (called when its lines stop). */
  finishBlank(): void {
    if (this.blankT.length === 0) return;
    const r = analyzeBlank(this.blankT, this.blankS, this.blankD, this.blankWl, this.limits, this.rules);
    const last = this.blankT[this.blankT.length - 1]! + this.timeOffset_s;
    this.blankT = []; this.blankS = []; this.blankD = [];
    if (!r.reference) {
      this.emit({ type: 'warning', message: `blank not taken: ${r.problem}` });
      return;
    }
    this.blank = r.reference;
    this.emit({
      type: 'blank',
      blank: {
        netBlank_counts: r.reference.netBlank_counts, dark_counts: r.reference.dark_counts, points: r.reference.points,
        wavelength_nm: r.reference.wavelength_nm, deviceTime_s: last,
        noise_AU: r.check?.noise_AU ?? null, drift_AUperMin: r.check?.drift_AUperMin ?? null, warmedUp: r.check?.warmedUp ?? null,
        warnings: r.warnings,
      },
    });
    for (const w of r.warnings) this.emit({ type: 'warning', message: w });
  }

  private countsReading(line: Extract<DeviceLine, { kind: 'counts' }>, hostTime_ms: number, raw: string, counts: RejectCounts): void {
    const blank = this.blank;
    if (!blank || Math.abs(blank.wavelength_nm - line.wavelength_nm) > this.wlTolerance_nm) {
      this.awaitingBlank++;
      const why = blank ? `the blank was taken at ${blank.wavelength_nm} nm, the device now reads at ${line.wavelength_nm} nm` : 'no blank has been taken';
      // Said when the reason changes, then now and again (not on every line).
      if (why !== this.awaitingWhy || this.awaitingBlank % 600 === 0) {
        this.awaitingWhy = why;
        this.emit({ type: 'warning', message: `the device sends raw counts and ${why}: take a blank to turn them into absorbance (${this.awaitingBlank} line(s) waiting so far)` });
      }
      return;
    }
    const a = absorbanceFromCounts(line.sampleCounts, line.darkCounts, blank, this.limits);
    if (a.absorbance === null) {
      this.problemsReported++;
      if (this.problemsReported === 1 || this.problemsReported % 100 === 0) {
        this.emit({ type: 'warning', message: `reading at ${(line.deviceTime_s + this.timeOffset_s).toFixed(3)} s dropped: ${a.problem} (${this.problemsReported} so far)` });
      }
      return;
    }
    const unreadable = readableAbsorbanceProblem(a.absorbance);
    if (unreadable) {
      counts.absorbanceRange++;
      this.refused('absorbanceRange', `${unreadable} (sample ${line.sampleCounts}, dark ${line.darkCounts ?? '-'} counts)`, raw, counts);
      return;
    }
    this.reading(line.deviceTime_s, hostTime_ms, a.absorbance, line.wavelength_nm, line.cellTemperature_C, line.flags | a.flags, line.sampleCounts, line.darkCounts);
  }

  private reading(
    deviceTime_s: number, hostTime_ms: number, absorbance: number, wavelength_nm: number, temp_C: number | null, flags: number,
    sampleCounts?: number, darkCounts?: number | null,
  ): void {
    if (!Number.isFinite(absorbance)) return; // the parser already refuses these; a second guard costs nothing
    if (this.restartCheck && this.lastRawTime_s !== null && this.lastDeviceTime_s !== null && deviceTime_s < this.lastRawTime_s) {
      // The device restarted and its clock with it: carry on from the last time plus the host's elapsed time.
      this.timeOffset_s = this.lastDeviceTime_s + Math.max(0, (hostTime_ms - this.lastHost_ms) / 1000) - deviceTime_s;
      this.emit({ type: 'warning', message: `the device restarted (its clock went from ${this.lastRawTime_s.toFixed(3)} s back to ${deviceTime_s.toFixed(3)} s); readings continue on the run's time line` });
    }
    this.restartCheck = false;
    this.lastRawTime_s = deviceTime_s;
    const t = deviceTime_s + this.timeOffset_s;
    this.lastDeviceTime_s = t;
    this.lastHost_ms = hostTime_ms;
    if (temp_C !== null) this.watchTemperature(temp_C);
    const reading: Reading = { deviceTime_s: t, hostTime_ms, absorbance, wavelength_nm, cellTemperature_C: temp_C, flags };
    if (sampleCounts !== undefined) reading.sampleCounts = sampleCounts;
    if (darkCounts !== undefined && darkCounts !== null) reading.darkCounts = darkCounts;
    this.readings++;
    this.emit({ type: 'reading', reading });
  }

  private watchTemperature(t_C: number): void {
    if (this.referenceTemp_C === null) { this.referenceTemp_C = t_C; return; }
    const d = t_C - this.referenceTemp_C;
    if (Math.abs(d) > this.driftLimit_K) {
      if (!this.temperatureOut) {
        this.temperatureOut = true;
        this.emit({
          type: 'warning',
          message: `cell temperature ${t_C.toFixed(2)} °C has moved ${d > 0 ? '+' : ''}${d.toFixed(2)} K from ${this.referenceTemp_C.toFixed(2)} °C at the start (limit ${this.driftLimit_K} K); the rate constant moves with it: thermostat the cell or note the drift`,
        });
      }
    } else if (Math.abs(d) < this.driftLimit_K / 2) {
      this.temperatureOut = false; // back in band: a later excursion warns again
    }
  }
}
