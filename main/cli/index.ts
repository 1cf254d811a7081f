/**
 * The `rateline` command: one entry, subcommands loaded on demand so that
 * `rateline analyze` never loads the serial port or the web host.
 */
import { EXIT_BAD_INPUT, EXIT_FAULT, InputError, type CommandModule } from './common/cliErrors';
import { RunFileError } from '../../acquisition/files/runFile';
import { RunRecordError } from '../../acquisition/record/journalReader';

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
  serve: { summary: 'serve the screens on a loopback web host (127.0.0.1, with a token)', load: () => import('./commands/serve') },
  start: { summary: 'start the desktop app (falls back to the loopback host without Electron)', load: () => import('./commands/start') },
};

function usage(): string {
  const lines = ['usage: rateline COMMAND [options]   (rateline COMMAND --help for its options)', '', 'commands:'];
  for (const [name, c] of Object.entries(commands)) lines.push(`  ${name.padEnd(10)} ${c.summary}`);
  return lines.join('\n');
}

export async function main(argv: string[]): Promise<number> {
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
    // Errors a user can cause, from any layer, are one line and exit 2: the command's own
    // (InputError) and the files' (a run file that cannot be read, a damaged run record).
    if (err instanceof InputError || err instanceof RunFileError || err instanceof RunRecordError) {
      console.error(err.message);
      return EXIT_BAD_INPUT;
    }
    const detail = err instanceof Error ? err.message : String(err);
    console.error(`rateline ${name}: internal fault (${detail}). Please report it with the command you ran.`);
    if (process.env.RATELINE_DEBUG) console.error(err);
    return EXIT_FAULT;
  }
}
