/**
 * The layer rules of ARCHITECTURE.md (and DEVELOPERS.md's table) as a check. For each
 * layer: which of our folders and files it may import, which packages, whether Node's
 * built-in modules, and whether DOM globals. Imports count in every form (static,
 * `import type`, `export … from`, `import()`, `require`). Unit tests (`*.test.ts`) may
 * import across layers and are not checked.
 *
 *   kinetics/     kinetics only (and zod): pure, no Node, no DOM, no platform package
 *   acquisition/  kinetics and itself; Node, serialport, zod
 *   main/         anything but renderer/
 *   renderer/     itself, kinetics, main/bridge/contract.ts and main/bridge/client.ts;
 *                 uplot and immer; no Node (renderer/vite.config.ts, the build script, aside)
 *
 * Nothing outside renderer/ imports renderer/. And since the screens' bundle takes in
 * whatever the renderer reaches, every file it reaches through our imports must be as
 * pure as kinetics is (no Node, no platform package).
 */
import { builtinModules } from 'node:module';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, normalize, relative, sep } from 'node:path';

export type Layer = 'kinetics' | 'acquisition' | 'main' | 'renderer';

export interface LayerRule {
  /** Our folders (ending in /) and files this layer may import from; 'anyButRenderer' for main. */
  ours: readonly string[] | 'anyButRenderer';
  /** npm packages it may import (a scope ending in / covers the scope), or 'any'. */
  packages: readonly string[] | 'any';
  /** Node's built-in modules. */
  node: boolean;
  /** DOM globals (window, document, …) in its code. */
  dom: boolean;
  /** Files of the layer's folder that are not part of the layer (build scripts). */
  aside?: readonly string[];
}

export const LAYER_RULES: Readonly<Record<Layer, LayerRule>> = {
  kinetics: { ours: ['kinetics/'], packages: ['zod'], node: false, dom: false },
  acquisition: { ours: ['kinetics/', 'acquisition/'], packages: ['zod', 'serialport', '@serialport/'], node: true, dom: true },
  main: { ours: 'anyButRenderer', packages: 'any', node: true, dom: true },
  renderer: {
    ours: ['renderer/', 'kinetics/', 'main/bridge/contract.ts', 'main/bridge/client.ts'],
    packages: ['uplot', 'immer'],
    node: false,
    dom: true,
    aside: ['renderer/vite.config.ts'],
  },
};

export const LAYERS = Object.keys(LAYER_RULES) as Layer[];

const NODE_BUILTINS = new Set(builtinModules.flatMap((m) => [m, `node:${m}`]));
const PLATFORM_PACKAGES = ['electron', 'serialport', '@serialport/', 'ws', 'tsx', 'vite', 'esbuild', 'playwright-core'];
const DOM_GLOBALS = /\b(window|document|navigator|localStorage|requestAnimationFrame|HTMLElement)\s*[.([]/;
const SOURCE_EXTENSIONS = ['.ts', '.tsx', '.js', '.mjs', '.cjs'];

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

/** The layer a repository path belongs to, or null (test/, build/, the root). */
export function layerOf(path: string): Layer | null {
  const top = path.split('/')[0] as Layer;
  return LAYERS.includes(top) ? top : null;
}

function packageName(spec: string): string {
  const parts = spec.split('/');
  return spec.startsWith('@') ? `${parts[0]}/${parts[1]}` : parts[0]!;
}

const matches = (name: string, list: readonly string[]): boolean =>
  list.some((p) => (p.endsWith('/') ? name.startsWith(p) : name === p));

/** Repository path of a relative import, with a source extension added when the file exists under root (else as written). */
function resolveRelative(root: string | null, fromFile: string, spec: string): string {
  const joined = normalize(join(dirname(fromFile), spec)).split(sep).join('/');
  if (root === null || /\.[cm]?[jt]sx?$/.test(joined)) return joined;
  for (const ext of SOURCE_EXTENSIONS) {
    try { if (statSync(join(root, joined + ext)).isFile()) return joined + ext; } catch { /* not this one */ }
  }
  for (const ext of SOURCE_EXTENSIONS) {
    try { if (statSync(join(root, joined, `index${ext}`)).isFile()) return `${joined}/index${ext}`; } catch { /* not this one */ }
  }
  return joined;
}

/**
 * Violations of its layer's rule in one source file. `file` is the repository path
 * (e.g. 'kinetics/halfLife.ts'); `root`, when given, lets an import without extension be
 * matched to the file it names (`./client` → `main/bridge/client.ts`).
 */
export function importViolations(file: string, source: string, rules: Readonly<Record<Layer, LayerRule>> = LAYER_RULES, root: string | null = null): LayerViolation[] {
  const layer = layerOf(file);
  if (!layer) return [];
  const rule = rules[layer];
  if (rule.aside?.includes(file)) return [];
  const out: LayerViolation[] = [];
  const say = (line: number, what: string) => out.push({ file, line, what });
  for (const { spec, line } of importedModules(source)) {
    if (spec.startsWith('.')) {
      const target = resolveRelative(root, file, spec);
      if (target.startsWith('..')) { say(line, `imports "${spec}", outside the repository`); continue; }
      const targetLayer = layerOf(target);
      const allowed = rule.ours === 'anyButRenderer'
        ? targetLayer !== 'renderer'
        : rule.ours.some((o) => (o.endsWith('/') ? target.startsWith(o) : target === o || `${target}.ts` === o));
      if (!allowed) say(line, `${layer}/ imports ${target} ("${spec}"), which ${layer}/ may not import`);
      continue;
    }
    if (NODE_BUILTINS.has(spec) || spec.startsWith('node:')) {
      if (!rule.node) say(line, `imports Node module "${spec}"`);
      continue;
    }
    const name = packageName(spec);
    if (rule.packages !== 'any' && !matches(name, rule.packages)) {
      say(line, `imports package "${spec}"${matches(name, PLATFORM_PACKAGES) ? ' (a platform package)' : ''}, which ${layer}/ may not import`);
    }
  }
  if (!rule.dom) {
    stripComments(source).split('\n').forEach((text, i) => {
      if (DOM_GLOBALS.test(text)) say(i + 1, `uses a DOM global: ${text.trim()}`);
    });
  }
  return out;
}

/** The pure rule alone (no Node module, no platform package), for files the screens' bundle takes in. */
export function platformImports(file: string, source: string): LayerViolation[] {
  return importedModules(source)
    .filter(({ spec }) => NODE_BUILTINS.has(spec) || spec.startsWith('node:') || matches(packageName(spec), PLATFORM_PACKAGES))
    .map(({ spec, line }) => ({ file, line, what: `imports platform module "${spec}", and the screens' bundle reaches this file` }));
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

const repoPath = (root: string, file: string): string => relative(root, file).split(sep).join('/');

/** Every violation of the rule table in one layer's folder under root. */
export function layerViolations(root: string, layer: Layer, rules: Readonly<Record<Layer, LayerRule>> = LAYER_RULES): LayerViolation[] {
  return sourceFiles(join(root, layer)).flatMap((f) => importViolations(repoPath(root, f), readFileSync(f, 'utf8'), rules, root));
}

/** Files outside renderer/ that the renderer reaches through our own imports, transitively. */
export function rendererReach(root: string): string[] {
  const rule = LAYER_RULES.renderer;
  const seen = new Set<string>();
  const queue = sourceFiles(join(root, 'renderer')).map((f) => repoPath(root, f)).filter((f) => !rule.aside?.includes(f));
  const reached: string[] = [];
  while (queue.length > 0) {
    const file = queue.pop()!;
    if (seen.has(file)) continue;
    seen.add(file);
    if (!file.startsWith('renderer/')) reached.push(file);
    let text: string;
    try { text = readFileSync(join(root, file), 'utf8'); } catch { continue; }
    for (const { spec } of importedModules(text)) {
      if (spec.startsWith('.')) queue.push(resolveRelative(root, file, spec));
    }
  }
  return reached.sort();
}

/** Platform imports in any file the screens' bundle reaches. */
export function bundleViolations(root: string): LayerViolation[] {
  return rendererReach(root).flatMap((f) => {
    try { return platformImports(f, readFileSync(join(root, f), 'utf8')); } catch { return []; }
  });
}
