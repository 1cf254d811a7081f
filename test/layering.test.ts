import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cpSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { LAYERS, LAYER_RULES, bundleViolations, importViolations, layerViolations, rendererReach } from './layering';

const root = join(__dirname, '..');

describe('layer rules (ARCHITECTURE.md, DEVELOPERS.md)', () => {
  for (const layer of LAYERS) {
    it(`${layer}/ imports only what its rule allows`, () => {
      expect(layerViolations(root, layer)).toEqual([]);
    });
  }

  it("the files the screens' bundle reaches outside renderer/ are pure", () => {
    const reached = rendererReach(root);
    // the contract and client, and what they import, are in the bundle; nothing of Node
    expect(reached).toEqual(expect.arrayContaining(['main/bridge/contract.ts', 'main/bridge/client.ts']));
    expect(bundleViolations(root)).toEqual([]);
  });
});

// Negative controls: probe files written into a copy of the tree, checked by the same
// functions with the same rule table, must be caught, and nothing else in the copy.
describe('the layer check catches what it is meant to catch', () => {
  let copy: string;
  beforeAll(() => {
    copy = mkdtempSync(join(tmpdir(), 'rateline-layering-'));
    for (const layer of LAYERS) cpSync(join(root, layer), join(copy, layer), { recursive: true });
    const probe = (path: string, text: string) => writeFileSync(join(copy, path), text);
    probe('kinetics/probeJournal.ts', "import { Journal } from '../acquisition/record/journal';\nexport const j = Journal;\n");
    probe('acquisition/probeService.ts', "import type { BenchDeps } from '../main/bench/benchDependencies';\nexport type D = BenchDeps;\n");
    probe('renderer/probeSource.ts', "import { SerialSource } from '../acquisition/sources/serialSource';\nexport const s = SerialSource;\n");
    probe('main/probeScreen.ts', "export { createStore } from '../renderer/store';\n");
    probe('renderer/probeBench.ts', "const m = await import('../main/bench/benchWiring');\nexport default m;\n");
    probe('main/bridge/probePlatform.ts', "import { readFileSync } from 'node:fs';\nexport const r = readFileSync;\n");
    // the contract reaching a Node-only file puts Node into the screens' bundle
    probe('main/bridge/contract.ts', "import './probePlatform';\nexport {};\n");
  });
  afterAll(() => rmSync(copy, { recursive: true, force: true }));

  it('kinetics importing acquisition', () => {
    expect(layerViolations(copy, 'kinetics')).toEqual([
      { file: 'kinetics/probeJournal.ts', line: 1, what: 'kinetics/ imports acquisition/record/journal.ts ("../acquisition/record/journal"), which kinetics/ may not import' },
    ]);
  });

  it('acquisition importing main', () => {
    expect(layerViolations(copy, 'acquisition')).toEqual([
      { file: 'acquisition/probeService.ts', line: 1, what: 'acquisition/ imports main/bench/benchDependencies.ts ("../main/bench/benchDependencies"), which acquisition/ may not import' },
    ]);
  });

  it('renderer importing acquisition, and main by import()', () => {
    expect(layerViolations(copy, 'renderer').map((v) => `${v.file}:${v.line} ${v.what}`)).toEqual([
      'renderer/probeBench.ts:1 renderer/ imports main/bench/benchWiring.ts ("../main/bench/benchWiring"), which renderer/ may not import',
      'renderer/probeSource.ts:1 renderer/ imports acquisition/sources/serialSource.ts ("../acquisition/sources/serialSource"), which renderer/ may not import',
    ]);
  });

  it('anything outside renderer importing renderer', () => {
    expect(layerViolations(copy, 'main')).toEqual([
      { file: 'main/probeScreen.ts', line: 1, what: 'main/ imports renderer/store.ts ("../renderer/store"), which main/ may not import' },
    ]);
  });

  it("a Node module reached by the screens' bundle through the contract", () => {
    // (the renderer probes above pull Node-only files into the reach as well)
    expect(bundleViolations(copy)).toContainEqual(
      { file: 'main/bridge/probePlatform.ts', line: 1, what: `imports platform module "node:fs", and the screens' bundle reaches this file` },
    );
  });

  it('Node modules, platform packages, DOM globals and paths outside the repository, in every import form', () => {
    const src = [
      "import { readFileSync } from 'node:fs';",
      "import type { X } from 'fs';",
      "const e = await import('electron');",
      "const s = require('serialport');",
      'document.title = "x";',
      '// window.alert() in a comment is fine',
      "export { y } from '../../elsewhere/reference/nist';",
      "import { fit } from './fit/leastSquares';",
      "import { z } from 'zod';",
    ].join('\n');
    const v = importViolations('kinetics/probe.ts', src);
    expect(v.map((x) => x.line)).toEqual([1, 2, 3, 4, 7, 5]);
    expect(v.find((x) => x.line === 7)?.what).toBe('imports "../../elsewhere/reference/nist", outside the repository');
    // the same text is allowed where the table allows it: acquisition may use Node and serialport, not electron
    expect(importViolations('acquisition/probe.ts', src).map((x) => x.line)).toEqual([3, 7]);
    // and the renderer's build script is aside
    expect(importViolations('renderer/vite.config.ts', src)).toEqual([]);
    expect(LAYER_RULES.renderer.packages).toEqual(['uplot', 'immer']);
  });
});
