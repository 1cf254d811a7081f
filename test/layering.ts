/**
 * The layer rules of ARCHITECTURE.md as a check: kinetics/ is pure (no Node module,
 * no DOM, no Electron, no platform package); renderer/ never reaches Node or Electron.
 */
import { builtinModules } from 'node:module';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';

const NODE_BUILTINS = new Set(builtinModules.flatMap((m) => [m, `node:${m}`]));
const PLATFORM_PACKAGES = ['electron', 'serialport', '@serialport/', 'ws', 'tsx', 'vite', 'playwright-core'];
const DOM_GLOBALS = /\b(window|document|navigator|localStorage|requestAnimationFrame|HTMLElement)\s*[.([]/;

export interface LayerViolation {
  file: string;
  line: number;
  what: string;
}

/** Module specifiers imported (statically, dynamically or by require) in a source text. */
export function importedModules(source: string): { spec: string; line: number }[] {
  const found: { spec: string; line: number }[] = [];
  const re = /(?:\bimport\s+(?:type\s+)?(?:[^'"`;]*?\bfrom\s*)?|\bexport\s+[^'"`;]*?\bfrom\s*|\bimport\s*\(\s*|\brequire\s*\(\s*)['"]([^'"]+)['"]/g;
  for (const m of source.matchAll(re)) {
    const line = source.slice(0, m.index).split('\n').length;
    found.push({ spec: m[1]!, line });
  }
  return found;
}

function isPlatformSpecifier(spec: string): boolean {
  if (NODE_BUILTINS.has(spec) || spec.startsWith('node:')) return true;
  return PLATFORM_PACKAGES.some((p) => (p.endsWith('/') ? spec.startsWith(p) : spec === p || spec.startsWith(`${p}/`)));
}

/** Violations of the pure-layer rule in one source text. */
export function pureLayerViolations(file: string, source: string, allowDom: boolean): LayerViolation[] {
  const out: LayerViolation[] = [];
  for (const { spec, line } of importedModules(source)) {
    if (isPlatformSpecifier(spec)) out.push({ file, line, what: `imports platform module "${spec}"` });
  }
  if (!allowDom) {
    const lines = stripComments(source).split('\n');
    lines.forEach((text, i) => {
      if (DOM_GLOBALS.test(text)) out.push({ file, line: i + 1, what: `uses a DOM global: ${text.trim()}` });
    });
  }
  return out;
}

function stripComments(source: string): string {
  // Keep line count: replace comment bodies by spaces/newlines.
  return source
    .replace(/\/\*[\s\S]*?\*\//g, (c) => c.replace(/[^\n]/g, ' '))
    .replace(/\/\/[^\n]*/g, '');
}

export function sourceFiles(dir: string): string[] {
  const out: string[] = [];
  for (const name of readdirSync(dir)) {
    const p = join(dir, name);
    if (statSync(p).isDirectory()) out.push(...sourceFiles(p));
    else if (/\.(ts|tsx|js|mjs|cjs)$/.test(name) && !/\.test\.ts$/.test(name)) out.push(p);
  }
  return out;
}

export function layerViolations(root: string, folder: string, allowDom: boolean): LayerViolation[] {
  return sourceFiles(join(root, folder)).flatMap((f) =>
    pureLayerViolations(relative(root, f), readFileSync(f, 'utf8'), allowDom),
  );
}
