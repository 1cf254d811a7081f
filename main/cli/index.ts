/**
 * The `rateline` command: one entry, subcommands loaded on demand so that
 * `rateline analyze` never loads the serial port or the web host, and `rateline --help`
 * loads no command at all (nor zod). bin/rateline.js runs this file's compiled bundle,
 * in which each import() below is a chunk of its own (bin/commandBundle.js).
 */
import { EXIT_BAD_INPUT, EXIT_FAULT, InputError, type CommandModule } from './common/cliErrors';
import { guardTerminal } from './common/terminalText';

interface CommandEntry {
  summary: string;
  load: () => Promise<CommandModule>;
}

const commands: Record<string, CommandEntry> = {
  analyze: { summary: 'fit a recorded run (CSV or run record) and print the result', load: () => import('./commands/analyze') },
  simulate: { summary: 'write a synthetic run as CSV from the physical model', load: () => import('./commands/simulate') },
  calibrate: { summary: 'fit the Beer–Lambert line to standards; read unknowns back', load: () => import('./commands/calibrate') },
  combine: { summary: 'combine runs into the rate law (by concentration) or Ea (by temperature)', load: () => import('./commands/combine') },
  emulate: { summary: 'play an instrument on a serial port, speaking the line protocol', load: () => import('./commands/emulate') },
  record: { summary: 'record a run from a serial instrument, headless', load: () => import('./commands/record') },
  export: { summary: 'write a recorded run as JCAMP-DX or annotated CSV', load: () => import('./commands/export') },
  train: { summary: 'score a trainee\'s stop on a recorded run; list the attempts kept', load: () => import('./commands/train') },
  serve: { summary: 'serve the screens on a loopback web host (127.0.0.1, with a token)', load: () => import('./commands/serve') },
  start: { summary: 'start the desktop app (falls back to the loopback host without Electron)', load: () => import('./commands/start') },
};

function usage(): string {
  const lines = ['usage: rateline COMMAND [options]   (rateline COMMAND --help for its options)', '', 'commands:'];
  for (const [name, c] of Object.entries(commands)) lines.push(`  ${name.padEnd(10)} ${c.summary}`);
  return lines.join('\n');
}

/**
 * Errors a user can cause, from any layer, are one line and exit 2: the command's own
 * (InputError) and the files' (a run file that cannot be read, a damaged run record).
 * The files' modules are loaded here, once something has gone wrong, not at start.
 */
async function causedByInput(err: unknown): Promise<boolean> {
  if (err instanceof InputError) return true;
  try {
    const [{ RunFileError }, { RunRecordError }] = await Promise.all([
      import('../../acquisition/files/runFile'),
      import('../../acquisition/record/journalReader'),
    ]);
    return err instanceof RunFileError || err instanceof RunRecordError;
  } catch {
    return false;
  }
}

export async function main(argv: string[]): Promise<number> {
  // Whatever a command prints may carry a file's or a person's text: no escape sequence in it reaches the terminal.
  guardTerminal(process.stdout);
  guardTerminal(process.stderr);
  const [name, ...rest] = argv;
  if (!name || name === '--help' || name === '-h' || name === 'help') {
    console.log(usage());
    return name ? 0 : EXIT_BAD_INPUT;
  }
  const entry = commands[name];
  if (!entry) {
    console.error(`rateline: no command "${name}"; run "rateline --help" for the list.`);
    return EXIT_BAD_INPUT;
  }
  try {
    const mod = await entry.load();
    return await mod.run(rest);
  } catch (err) {
    if (await causedByInput(err)) {
      console.error((err as Error).message);
      return EXIT_BAD_INPUT;
    }
    const detail = err instanceof Error ? err.message : String(err);
    console.error(`rateline ${name}: internal fault (${detail}). Please report it with the command you ran.`);
    if (process.env.RATELINE_DEBUG) console.error(err);
    return EXIT_FAULT;
  }
}
