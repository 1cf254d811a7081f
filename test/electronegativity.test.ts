/**
 * @doyensec/electronegativity (its own CLI) over the shell's and the screens' sources:
 * no HIGH finding, and every other finding listed with its reason in
 * build/electronegativity-review.json. A new unreviewed finding fails, and so does a
 * reviewed one the scan no longer reports (the review file must stay true).
 *
 * The sources are copied to a scratch folder first, so the scan sees only our code (not
 * node_modules or built bundles), beside a deliberately unsafe window as a negative
 * control that must raise HIGH findings.
 */
import { spawnSync } from 'node:child_process';
import { cpSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

const ROOT = join(import.meta.dirname, '..');

interface Finding { check: string; severity: string; confidence: string; file: string; location: string; sample: string }
interface Reviewed { check: string; file: string; severity: string; reason: string }

let scratch: string;
let findings: Finding[] = [];

beforeAll(() => {
  scratch = mkdtempSync(join(tmpdir(), 'rateline-electronegativity-'));
  const app = join(scratch, 'app');
  const onlySources = (src: string): boolean => !/\.test\.ts$/.test(src);
  cpSync(join(ROOT, 'main'), join(app, 'main'), { recursive: true, filter: onlySources });
  cpSync(join(ROOT, 'renderer'), join(app, 'renderer'), { recursive: true, filter: onlySources });
  writeFileSync(join(app, 'package.json'), JSON.stringify({ name: 'rateline', devDependencies: { electron: '41.7.1' } }));
  // Negative control: a window with every protection off.
  mkdirSync(join(scratch, 'control'));
  writeFileSync(join(scratch, 'control', 'unsafe.js'), [
    "const { BrowserWindow } = require('electron');",
    'const w = new BrowserWindow({ webPreferences: { nodeIntegration: true, contextIsolation: false, sandbox: false, webSecurity: false } });',
    "w.loadURL('http://example.org/');",
  ].join('\n'));
  // The package's own runner (its CLI's engine), in a child process; results are taken as
  // objects, since its CSV writer races its header against its rows.
  const out = join(scratch, 'findings.json');
  const script = `
    const mod = require(${JSON.stringify(join(ROOT, 'node_modules', '@doyensec', 'electronegativity'))});
    const run = typeof mod === 'function' ? mod : mod.default;
    run({ input: process.argv[1], isRelative: true, electronVersionOverride: '41.7.1', parserPlugins: [] }).then((r) => {
      const rows = r.issues.map((i) => ({ check: i.id, severity: i.severity.name, confidence: i.confidence.name,
        file: i.file, location: i.location.line + ':' + i.location.column, sample: String(i.sample || '').slice(0, 200) }));
      require('fs').writeFileSync(process.argv[2], JSON.stringify({ errors: r.errors.length, rows }));
    }, (e) => { console.error(e); process.exit(1); });`;
  const r = spawnSync(process.execPath, ['-e', script, scratch, out], { cwd: ROOT, encoding: 'utf8', timeout: 120_000 });
  expect(r.status, r.stderr).toBe(0);
  const result = JSON.parse(readFileSync(out, 'utf8')) as { errors: number; rows: Finding[] };
  findings = result.rows.map((f) => ({ ...f, file: f.file.replace(/\\/g, '/').replace(/^app\//, '') }));
}, 150_000);

afterAll(() => { if (!process.env.KEEP_SCAN) rmSync(scratch, { recursive: true, force: true }); });

const ours = (): Finding[] => findings.filter((f) => !f.file.startsWith('control/'));

describe('electronegativity scan of the sources', () => {
  it('finds the unsafe control window (the scanner is really looking)', () => {
    const control = findings.filter((f) => f.file.startsWith('control/'));
    expect(control.filter((f) => f.severity === 'HIGH').map((f) => f.check)).toContain('CONTEXT_ISOLATION_JS_CHECK');
    expect(control.map((f) => f.check)).toEqual(expect.arrayContaining(['SANDBOX_JS_CHECK', 'WEB_SECURITY_JS_CHECK', 'HTTP_RESOURCES_JS_CHECK']));
  });

  it('has no HIGH finding in our sources', () => {
    expect(ours().length, 'the scan saw our window').toBeGreaterThan(0);
    expect(ours().filter((f) => f.severity === 'HIGH')).toEqual([]);
  });

  it('has only reviewed findings, and every reviewed one still occurs', () => {
    const review = JSON.parse(readFileSync(join(ROOT, 'build', 'electronegativity-review.json'), 'utf8')) as { reviewed: Reviewed[] };
    for (const r of review.reviewed) expect(r.reason.length, `${r.check} needs a reason`).toBeGreaterThan(40);
    const key = (f: { check: string; file: string }): string => `${f.check} @ ${f.file}`;
    const reviewed = new Set(review.reviewed.map(key));
    const unreviewed = ours().filter((f) => !reviewed.has(key(f))).map((f) => `${key(f)} ${f.location} [${f.severity}] ${f.sample}`);
    expect(unreviewed, 'new findings: fix them or review them in build/electronegativity-review.json').toEqual([]);
    const found = new Set(ours().map(key));
    const stale = review.reviewed.filter((r) => !found.has(key(r))).map(key);
    expect(stale, 'reviewed findings the scan no longer reports: remove them from the review file').toEqual([]);
  });
});
