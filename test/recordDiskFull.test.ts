/**
 * The real `rateline record` against a disk that fills and a file-size limit, for real:
 * - a 256 KiB tmpfs mounted in a mount namespace of the child's own (`unshare`, as root
 *   or through a user namespace), so nothing is mounted on the machine and the mount
 *   goes with the child; the kernel cuts the last write short, then refuses it (ENOSPC);
 * - `ulimit -f` in the child's shell, so the kernel refuses to let the file grow (EFBIG).
 * - the runs folder deleted under a running record, which writes alone never report.
 * Either way the command must stop with exit 2 and one sentence that says how many
 * readings the file holds, and the file must be a valid record of exactly that many
 * (read by our reader and by a plain JSON Lines read). The records are left in
 * test-artifacts/ (disk-full.jsonl, file-size-limit.jsonl).
 */
import { spawn } from 'node:child_process';
import { copyFileSync, mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { parseRunRecord } from '../acquisition/record/journalReader';
import { ROOT } from './cli/ratelineCli';

const ARTIFACTS = join(ROOT, 'test-artifacts');
const dir = mkdtempSync(join(tmpdir(), 'rateline-diskfull-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function sh(script: string, args: string[], prefix: string[] = []): Promise<{ code: number | null; out: string; err: string }> {
  return new Promise((resolve, reject) => {
    const p = spawn(prefix[0] ?? 'sh', [...prefix.slice(1), ...(prefix.length ? ['sh'] : []), '-c', script, 'sh', ...args], { cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'] });
    let out = '';
    let err = '';
    p.stdout.on('data', (d) => (out += String(d)));
    p.stderr.on('data', (d) => (err += String(d)));
    p.on('error', reject);
    p.on('exit', (code) => resolve({ code, out, err }));
  });
}

const RECORD = `"${process.execPath}" bin/rateline.js record --simulate --speed max --max-seconds 1000000 --progress-ms 60000 --out "$1"`;

/** What a plain JSON Lines read finds: every line parses, and the reading lines. */
function plainRead(path: string): { readings: number; lastTime_s: number | null; endsWithNewline: boolean } {
  const text = readFileSync(path, 'utf8');
  const lines = text.split('\n').filter((l) => l !== '');
  const values = lines.map((l) => JSON.parse(l) as unknown);
  const readings = values.filter((v): v is number[] => Array.isArray(v));
  return { readings: readings.length, lastTime_s: readings.length ? readings[readings.length - 1]![0]! : null, endsWithNewline: text.endsWith('\n') };
}

function checkStop(err: string, record: string, words: RegExp): number {
  const lines = err.trim().split('\n');
  expect(lines, err).toHaveLength(1);
  expect(lines[0]).toMatch(words);
  const said = /it holds (\d+) readings \(the last at ([\d.e+-]+) s device time\), complete up to its last line; /.exec(lines[0]!);
  expect(said, lines[0]).not.toBeNull();
  const plain = plainRead(record);
  expect(plain.endsWithNewline).toBe(true);
  expect(plain.readings).toBe(Number(said![1]));
  expect(plain.lastTime_s).toBe(Number(said![2]));
  const rec = parseRunRecord(readFileSync(record, 'utf8'), record);
  expect(rec.readings.count).toBe(Number(said![1]));
  expect(rec.recovery.tornLine).toBeNull();
  expect(rec.end).toBeNull();
  return rec.readings.count;
}

describe('rateline record on a disk that fills', () => {
  it('stops with one sentence saying how many readings the full disk holds, and the record reads back with exactly those', async () => {
    const mount = join(dir, 'stick');
    mkdirSync(mount);
    const copy = join(dir, 'disk-full.jsonl');
    // The record lives on the tmpfs inside the namespace; it is copied out before the namespace goes.
    const script = `mount -t tmpfs -o size=256k tmpfs "$1" || exit 97; ${RECORD.replace('"$1"', '"$1/run.jsonl"')}; code=$?; cp "$1/run.jsonl" "$2"; exit $code`;
    const r = await sh(script, [mount, copy], ['unshare', '--mount', '--map-root-user']);
    expect(r.code, `unshare and a tmpfs mount are needed (root, or user namespaces): ${r.err}`).not.toBe(97);
    expect(r.code, r.err).toBe(2);
    const n = checkStop(r.err, copy, /^rateline record: .*run\.jsonl: the run record could not be written further \(the disk is full\); it holds \d+ readings .*; free space or choose another disk, and record again\.$/);
    // 256 KiB at about 40 bytes a reading: thousands, not a handful.
    expect(n).toBeGreaterThan(2000);
    mkdirSync(ARTIFACTS, { recursive: true });
    copyFileSync(copy, join(ARTIFACTS, 'disk-full.jsonl'));
    // And the record is one `rateline analyze` reads, as a recovered record.
    const a = await sh(`"${process.execPath}" bin/rateline.js analyze "$1"`, [copy]);
    expect(a.code, a.err).toBe(0);
    expect(a.err).toMatch(/the record has no end line \(the recording was cut off\); recovered \d+ readings/);
  });

  it('says a file-size limit (EFBIG) is one, not a full disk', async () => {
    const record = join(dir, 'file-size-limit.jsonl');
    // 400 blocks of 512 bytes (POSIX sh): 200 KiB for any one file this shell's children write.
    const r = await sh(`ulimit -f 400 && ${RECORD}`, [record]);
    expect(r.code, r.err).toBe(2);
    checkStop(r.err, record, /\(the file reached the largest size this system allows one file, a file-size limit rather than a lack of space\); it holds \d+ readings .*; record the rest into a new file/);
    expect(r.err).not.toMatch(/free space/);
    expect(readFileSync(record).length).toBeLessThanOrEqual(400 * 512);
    mkdirSync(ARTIFACTS, { recursive: true });
    copyFileSync(record, join(ARTIFACTS, 'file-size-limit.jsonl'));
  });

  it('stops with one sentence when the runs folder is deleted under the record', async () => {
    const runs = join(dir, 'runs-to-delete');
    mkdirSync(runs);
    const p = spawn(process.execPath, ['bin/rateline.js', 'record', '--simulate', '--speed', '20', '--progress', 'json', '--progress-ms', '100', '--out', join(runs, 'run.jsonl')], { cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'] });
    let err = '';
    p.stderr.on('data', (d) => (err += String(d)));
    const exited = new Promise<number | null>((resolve) => p.on('exit', (code) => resolve(code)));
    await new Promise<void>((resolve) => {
      let out = '';
      p.stdout.on('data', (d) => {
        out += String(d);
        if (/"journalled":[1-9]/.test(out)) resolve();
      });
    });
    rmSync(runs, { recursive: true, force: true });
    const code = await Promise.race([exited, new Promise<'still running'>((r) => setTimeout(() => r('still running'), 20_000))]);
    if (code === 'still running') p.kill('SIGKILL');
    expect(code, err).toBe(2);
    const lines = err.trim().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^rateline record: .*run\.jsonl: the run record could not be written further \(the file, or the folder holding it, was deleted while recording\); none of its \d+ readings can be found on the disk any more; record again to a folder that stays\.$/);
  }, 60_000);
});
