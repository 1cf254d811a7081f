/**
 * `rateline emulate --port PATH ...` plays an instrument on a real serial port: it speaks
 * the Rateline line protocol (acquisition/protocol/PROTOCOL.md), answers commands, and sends a
 * reading every interval (divided by the speed factor), driven by the physical model of
 * the simulator. With a pty pair from socat it gives a real serial line to test and demo
 * with. Like a real device, it keeps measuring when the line goes away and carries on
 * when the port comes back. The readings are demo data. With --plain it is instead an
 * instrument that prints plain delimited lines laid out by a plain-lines spec (the same spec
 * `rateline record --plain` reads with) and takes no commands.
 */
import { closeSync, openSync, writeSync } from 'node:fs';
import { InputError } from '../common/cliErrors';
import { parseCommandArguments } from '../common/arguments';
import { SEED_WORDS, SPEED_WORDS, seedCheck, speedCheck } from '../common/benchRanges';
import { DEMO_RUN, type SimulatedOrder } from '../../../kinetics/reactionModel';
import { SimulatedInstrument, defaultInstrumentSettings } from '../../../acquisition/sources/simulatedInstrument';
import { openFailureMessage, owningGroup } from '../../../acquisition/sources/portErrors';
import { PLAIN_SPEC_HELP, PlainSpecError, formatPlainLine, parsePlainSpec, plainBanner, type PlainSpec } from '../../../acquisition/plain/plainSpec';

const HELP = `usage: rateline emulate --port PATH [options]

Plays a simulated absorbance instrument (demo data) on a serial port, speaking the
Rateline line protocol. For a serial pair without hardware:
  socat -d -d pty,raw,echo=0,link=/tmp/rl-dev pty,raw,echo=0,link=/tmp/rl-host
  rateline emulate --port /tmp/rl-dev --speed 20
  rateline record --port /tmp/rl-host --out run.jsonl

  --port PATH      serial port to play on (required)
  --baud N         baud rate (default 115200)
  --speed X        device seconds per real second (default 1)
  --seed N         random seed of the noise (default 1)
  --order O        zero, first, second or a number (default first)
  --k K            rate constant (default 0.0035, the demo's, in the order's units)
  --a0 A           absorbance at mixing (default 0.65)
  --a-inf A        end absorbance (default 0.005; above --a0 for a run that rises as an
                   absorbing product forms)
  --noise-t S      transmittance noise sigma_T (default 0.001)
  --interval S     seconds between readings (default 1)
  --counts         send raw detector counts (the host must take a blank) instead of absorbance
  --temp-drift K   cell temperature drift in kelvin per minute (default 0)
  --duration S     stop after this many device seconds (default: run until Ctrl-C)
  --plain SPEC     print plain delimited lines laid out by SPEC instead of the protocol,
                   e.g. --plain "time=1,time-unit=s,signal=2,signal-unit=%T,delimiter=tab";
                   skip=N prints an N-line banner first (interval= is for the reader: use --interval)
  --sent-log FILE  also write every line sent, as sent, to FILE (a new file)

Plain lines, ${PLAIN_SPEC_HELP.replace(/\n {2}/g, '\n')}`;

const OPTIONS = {
  port: 'value', baud: 'value', speed: 'value', seed: 'value', order: 'value', k: 'value', a0: 'value', 'a-inf': 'value', 'noise-t': 'value',
  interval: 'value', counts: 'flag', 'temp-drift': 'value', duration: 'value', plain: 'value', 'sent-log': 'value',
} as const;

function parseOrder(raw: string | undefined): SimulatedOrder {
  if (raw === undefined) return DEMO_RUN.order;
  if (raw === 'zero' || raw === 'first' || raw === 'second') return raw;
  const n = Number(raw);
  if (raw.trim() === '' || !Number.isFinite(n) || n < 0 || n > 3) throw new InputError(`rateline emulate: --order ${raw} is not an order; use zero, first, second or a number from 0 to 3.`);
  return n;
}

export async function run(argv: string[]): Promise<number> {
  const cmd = 'emulate';
  const args = parseCommandArguments(cmd, argv, OPTIONS);
  if (args.help) { console.log(HELP); return 0; }
  if (args.positionals.length > 0) throw new InputError(`rateline emulate: unexpected argument "${args.positionals[0]}"; the port goes after --port.`);
  const path = args.value('port');
  if (!path) throw new InputError('rateline emulate: no --port PATH given; name the serial port to play on (see --help for a socat pair).');
  const baudRate = args.number('baud', (x) => Number.isInteger(x) && x >= 300 && x <= 4_000_000, 'a baud rate such as 9600 or 115200') ?? 115200;
  const speed = args.number('speed', speedCheck, SPEED_WORDS) ?? 1;
  const seed = args.number('seed', seedCheck, SEED_WORDS) ?? 1;
  const order = parseOrder(args.value('order'));
  const k = args.number('k', (x) => x > 0, 'a positive rate constant') ?? DEMO_RUN.k;
  const a0 = args.number('a0', (x) => x > 0 && x < 5, 'an absorbance between 0 and 5') ?? DEMO_RUN.a0;
  const aInf = args.number('a-inf', (x) => x >= 0 && x < 5, 'an absorbance between 0 and 5') ?? DEMO_RUN.aInf;
  // Above --a0, an absorbing product forms and the readings rise (the analyzer fits either way).
  if (aInf === a0) throw new InputError(`rateline emulate: --a-inf ${aInf} equals --a0, so nothing would change; give an end absorbance below --a0 (the dye used up) or above it (an absorbing product forms).`);
  const sigmaT = args.number('noise-t', (x) => x >= 0 && x < 0.1, 'a transmittance noise between 0 and 0.1') ?? DEMO_RUN.sigmaT;
  const interval_s = args.number('interval', (x) => x >= 0.01 && x <= 3600, 'an interval between 0.01 and 3600 s') ?? 1;
  const drift = args.number('temp-drift', (x) => Math.abs(x) <= 10, 'a drift between -10 and 10 K/min') ?? 0;
  const duration_s = args.number('duration', (x) => x > 0, 'a positive number of seconds') ?? null;
  let plain: PlainSpec | null = null;
  const counts = args.flag('counts');
  const plainText = args.value('plain');
  if (plainText !== undefined) {
    try {
      plain = parsePlainSpec(plainText);
    } catch (err) {
      if (err instanceof PlainSpecError) throw new InputError(`rateline emulate: --plain "${plainText}": ${err.message}.`);
      throw err;
    }
    if (counts) throw new InputError('rateline emulate: --counts and --plain do not go together; an instrument printing plain lines sends its signal (A, %T or T) as the spec says.');
  }
  const sentLog = args.value('sent-log');

  const instrument = new SimulatedInstrument(defaultInstrumentSettings({ order, k, a0, aInf }, {
    sigmaT, seed, interval_s, sends: counts ? 'counts' : 'absorbance', temperatureDrift_KperMin: drift,
  }));
  let logFd: number | null = null;
  if (sentLog !== undefined) {
    try {
      logFd = openSync(sentLog, 'wx');
    } catch (err) {
      const code = (err as NodeJS.ErrnoException).code;
      throw new InputError(`rateline emulate: cannot create --sent-log ${sentLog} (${code === 'EEXIST' ? 'it exists already, and is never overwritten' : code ?? String(err)}); choose a new file name.`);
    }
  }
  const { SerialPort } = await import('serialport');
  const { ReadlineParser } = await import('@serialport/parser-readline');

  type Port = InstanceType<typeof SerialPort>;
  const openPort = (): Promise<Port> => new Promise((resolve, reject) => {
    const p = new SerialPort({ path, baudRate, autoOpen: false });
    p.open((err) => (err ? reject(err) : resolve(p)));
  });

  let port: Port | null;
  try {
    port = await openPort();
  } catch (err) {
    const ports = await SerialPort.list().catch(() => []);
    if (logFd !== null) closeSync(logFd);
    throw new InputError(`rateline emulate: ${openFailureMessage(path, err, ports, process.platform, owningGroup(path)).message}`);
  }

  let sent = 0;
  let stopping = false;
  let reopenTimer: ReturnType<typeof setTimeout> | null = null;
  const write = (lines: string[]): void => {
    if (!port?.isOpen || lines.length === 0) return;
    const text = lines.join('');
    port.write(text, 'latin1');
    if (logFd !== null) writeSync(logFd, text, null, 'latin1');
    sent += lines.length;
  };
  const attach = (p: Port): void => {
    const reader = p.pipe(new ReadlineParser({ delimiter: '\n', encoding: 'latin1' }));
    // An instrument printing plain lines takes no commands.
    reader.on('data', (line: string) => { if (!plain) write(instrument.handle(line)); });
    p.on('error', () => undefined); // a lost line shows as 'close'
    p.on('close', () => {
      if (p !== port) return;
      port = null;
      if (!stopping) {
        console.error(`rateline emulate: lost ${path}; still measuring, reopening when it comes back.`);
        scheduleReopen(250);
      }
    });
  };
  const scheduleReopen = (delay_ms: number): void => {
    reopenTimer = setTimeout(() => {
      reopenTimer = null;
      if (stopping) return;
      openPort().then((p) => {
        if (stopping) { p.close(); return; }
        port = p;
        attach(p);
        console.error(`rateline emulate: ${path} is back.`);
      }, () => scheduleReopen(Math.min(2000, delay_ms * 1.5)));
    }, delay_ms);
  };
  attach(port);
  let plainLines = 0;
  const measure = (deviceTime_s: number): string[] => {
    if (!plain) return instrument.measure(deviceTime_s);
    const r = instrument.reading(deviceTime_s);
    plainLines++;
    return [formatPlainLine(plain.config, { time_s: deviceTime_s, absorbance: r.absorbance, temperature_C: r.temperature_C, wavelength_nm: instrument.wavelength_nm }, plainLines) + '\r\n'];
  };
  if (plain) write(plainBanner(plain.config, instrument.wavelength_nm, interval_s).map((l) => l + '\r\n'));
  else write([instrument.identityLine()]);
  const linesPerSecond = speed / interval_s;
  console.log(
    `rateline emulate: ${plain ? `plain-lines instrument (${plain.canonical})` : counts ? 'counts instrument' : 'absorbance instrument'} (demo data) on ${path} at ${baudRate} baud, ` +
    `${order} order, k ${k}, reading every ${interval_s} s at ${speed}× speed; Ctrl-C to stop.`,
  );
  if (linesPerSecond > 250) console.log(`rateline emulate: note: ${Math.round(linesPerSecond)} lines/s is more than a real 115200-baud line carries (about 250 lines of this length).`);

  return new Promise<number>((resolve) => {
    const start_ms = performance.now();
    let deviceTime_s = 0;
    let timer: ReturnType<typeof setTimeout> | null = null;
    // Device time follows the host clock times the speed; every reading due by now is made, so a
    // late timer never skips one (readings made while the line is away are lost, as on a real cable).
    const step = (): void => {
      timer = null;
      const due_s = ((performance.now() - start_ms) / 1000) * speed;
      while (deviceTime_s + instrument.interval_s <= due_s + 1e-9) {
        deviceTime_s += instrument.interval_s;
        write(measure(deviceTime_s));
        if (duration_s !== null && deviceTime_s >= duration_s - 1e-9) { finish('duration reached'); return; }
      }
      const next_ms = start_ms + ((deviceTime_s + instrument.interval_s) / speed) * 1000;
      timer = setTimeout(step, Math.max(0, next_ms - performance.now()));
    };
    const finish = (why: string): void => {
      if (stopping) return;
      stopping = true;
      if (timer) clearTimeout(timer);
      if (reopenTimer) clearTimeout(reopenTimer);
      process.off('SIGINT', onSignal);
      process.off('SIGTERM', onSignal);
      const p = port;
      port = null;
      const done = (): void => {
        if (logFd !== null) closeSync(logFd);
        console.log(`rateline emulate: stopped (${why}) after ${sent} lines, ${deviceTime_s.toFixed(1)} device seconds.`);
        resolve(0);
      };
      if (p?.isOpen) p.drain(() => p.close(() => done()));
      else done();
    };
    const onSignal = (sig: NodeJS.Signals): void => finish(sig);
    process.on('SIGINT', onSignal);
    process.on('SIGTERM', onSignal);
    timer = setTimeout(step, (instrument.interval_s / speed) * 1000);
  });
}
