/**
 * The command's compiled bundle (bin/commandBundle.js), in a scratch copy of the project
 * as a fresh clone has it: built on the first run, once however many commands start at
 * once, again after a source is edited and not otherwise, a compile error reported in one
 * line with exit 2, a lock left by a killed build not waited on, and `rateline --help`
 * loading neither a TypeScript loader nor zod (seen by Node's own module hooks).
 */
import { spawn, spawnSync } from 'node:child_process';
import { appendFileSync, existsSync, mkdirSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { exitOf } from '../childProcesses';
import { ROOT, scratchProject, type CommandRun } from './ratelineCli';

let project: string;

/** `rateline ARGS` in the scratch project, with Node options before the script. */
function rateline(args: string[], nodeOptions: string[] = []): CommandRun {
  const r = spawnSync(process.execPath, [...nodeOptions, join(project, 'bin', 'rateline.js'), ...args], { cwd: project, encoding: 'utf8', timeout: 60_000 });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

/** `rateline ARGS` started without waiting, its output gathered. */
function started(args: string[]): { done: Promise<CommandRun> } {
  const child = spawn(process.execPath, [join(project, 'bin', 'rateline.js'), ...args], { cwd: project, stdio: ['ignore', 'pipe', 'pipe'] });
  let out = '';
  let err = '';
  child.stdout.on('data', (d: Buffer) => { out += d.toString(); });
  child.stderr.on('data', (d: Buffer) => { err += d.toString(); });
  return { done: exitOf(child).then((code) => ({ code, out, err })) };
}

const bundleDir = (): string => join(project, 'dist', 'cli');
const builds = (): string[] => (existsSync(bundleDir()) ? readdirSync(bundleDir(), { withFileTypes: true }).filter((e) => e.isDirectory()).map((e) => e.name).sort() : []);
const currentBuild = (): string => (JSON.parse(readFileSync(join(bundleDir(), 'manifest.json'), 'utf8')) as { entry: string }).entry.split('/')[0]!;
/** One line per build made (dist/cli/builds.log). */
const buildCount = (): number => (existsSync(join(bundleDir(), 'builds.log')) ? readFileSync(join(bundleDir(), 'builds.log'), 'utf8').trim().split('\n').length : 0);
const lock = (): string => join(project, 'dist', '.cli-build.lock');
const source = (file: string): string => join(project, file);

beforeAll(() => { project = scratchProject('rateline-bundle-'); });
afterAll(() => { if (project) rmSync(project, { recursive: true, force: true }); });

describe('the command bundle', () => {
  it('on a fresh clone, two commands started at once make one build and both run', async () => {
    expect(existsSync(bundleDir())).toBe(false);
    const [a, b] = await Promise.all([started(['--help']).done, started(['simulate', '--help']).done]);
    expect(a.err).toBe('');
    expect(a.code).toBe(0);
    expect(a.out).toMatch(/^usage: rateline COMMAND/);
    expect(b.err).toBe('');
    expect(b.code).toBe(0);
    expect(b.out).toMatch(/^usage: rateline simulate/);
    expect(buildCount()).toBe(1);
    expect(builds()).toHaveLength(1);
    expect(existsSync(lock())).toBe(false);
    expect(readFileSync(join(ROOT, '.gitignore'), 'utf8').split('\n')).toContain('dist/');
  }, 60_000);

  it('is not rebuilt when nothing changed', () => {
    const before = currentBuild();
    expect(rateline(['--help']).code).toBe(0);
    expect(currentBuild()).toBe(before);
    expect(buildCount()).toBe(1);
    expect(builds()).toEqual([before]);
  });

  it('is rebuilt when a source is edited, the entry or a command loaded on demand', () => {
    const index = source('main/cli/index.ts');
    writeFileSync(index, readFileSync(index, 'utf8').replace('fit a recorded run (CSV or run record)', 'fit a recorded run (CSV, run record: edited)'));
    const before = currentBuild();
    const help = rateline(['--help']);
    expect(help.code).toBe(0);
    expect(help.out).toMatch(/fit a recorded run \(CSV, run record: edited\)/);
    expect(currentBuild()).not.toBe(before);
    // The build before is kept for a command still running from it; older ones go.
    expect(builds()).toEqual([before, currentBuild()].sort());

    const simulate = source('main/cli/commands/simulate.ts');
    writeFileSync(simulate, readFileSync(simulate, 'utf8').replace('usage: rateline simulate', 'usage (edited): rateline simulate'));
    const r = rateline(['simulate', '--help']);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^usage \(edited\): rateline simulate/);
    expect(builds()).toHaveLength(2);
    expect(buildCount()).toBe(3);
  }, 60_000);

  it('is rebuilt when its build folder is removed', () => {
    rmSync(join(bundleDir(), currentBuild()), { recursive: true });
    const r = rateline(['--help']);
    expect(r.code).toBe(0);
    expect(existsSync(join(bundleDir(), currentBuild()))).toBe(true);
  }, 60_000);

  it('says in one line, exit 2, where a source does not compile, and runs again once it is fixed', () => {
    const simulate = source('main/cli/commands/simulate.ts');
    const good = readFileSync(simulate, 'utf8');
    const before = currentBuild();
    appendFileSync(simulate, '\nexport const broken = (;\n');
    const r = rateline(['--help']);
    expect(r.code).toBe(2);
    expect(r.out).toBe('');
    const lines = r.err.trim().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^rateline: the command could not be compiled: main\/cli\/commands\/simulate\.ts line \d+: .+; fix the source and run the command again\.$/);
    expect(r.err).not.toMatch(/\bat .*:\d+:\d+/);
    expect(existsSync(lock())).toBe(false);
    expect(currentBuild()).toBe(before);
    writeFileSync(simulate, good);
    const fixed = rateline(['simulate', '--help']);
    expect(fixed.code).toBe(0);
    expect(fixed.out).toMatch(/^usage \(edited\): rateline simulate/);
  }, 60_000);

  it('waits for a build in progress, and takes over a lock whose builder was killed', async () => {
    const index = source('main/cli/index.ts');
    writeFileSync(index, `${readFileSync(index, 'utf8')}\n// edited again\n`);
    const before = builds();
    // A "builder" that holds the lock: a live process whose pid is in the lock folder.
    const owner = spawn('sleep', ['60'], { stdio: 'ignore' });
    mkdirSync(lock());
    writeFileSync(join(lock(), 'pid'), String(owner.pid));
    const waiting = started(['--help']);
    await new Promise((r) => setTimeout(r, 1500));
    expect(builds()).toEqual(before); // nothing built while the lock's owner lives
    owner.kill('SIGKILL');
    await exitOf(owner);
    const r = await waiting.done;
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    expect(builds()).not.toEqual(before);
    expect(existsSync(lock())).toBe(false);
  }, 60_000);

  it('runs `--help` with no TypeScript loader and without zod, which `analyze` loads', () => {
    // Node's module hooks write down every file the command loads.
    const log = join(project, 'loaded.log');
    const hooks = join(project, 'loadHooks.mjs');
    writeFileSync(hooks, `import { appendFileSync } from 'node:fs';
export async function load(url, context, next) {
  if (url.startsWith('file:')) appendFileSync(${JSON.stringify(log)}, url + '\\n');
  return next(url, context);
}\n`);
    writeFileSync(join(project, 'registerHooks.mjs'), `import { register } from 'node:module';\nregister('./loadHooks.mjs', import.meta.url);\n`);
    const loadedBy = (args: string[]): string[] => {
      rmSync(log, { force: true });
      const r = rateline(args, ['--import', join(project, 'registerHooks.mjs')]);
      expect(r.code).toBe(0);
      return readFileSync(log, 'utf8').trim().split('\n').map((u) => fileURLToPath(u));
    };
    const zodIn = (files: string[]): string[] => files.filter((f) => f.includes('/node_modules/zod/') || /\/\/ .*node_modules\/zod\//.test(readFileSync(f, 'utf8')));
    const help = loadedBy(['--help']);
    expect(help.filter((f) => !f.includes('/dist/cli/') && !f.includes('/bin/') && f !== hooks)).toEqual([]);
    expect(help.filter((f) => /\.[cm]?ts$/.test(f) || f.includes('/node_modules/tsx/'))).toEqual([]);
    expect(zodIn(help)).toEqual([]);
    // Control: the same check finds zod where a command needs it.
    expect(zodIn(loadedBy(['analyze', '--help'])).length).toBeGreaterThan(0);
  }, 60_000);
});
