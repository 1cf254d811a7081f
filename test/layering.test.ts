import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { layerViolations, pureLayerViolations } from './layering';

const root = join(__dirname, '..');

describe('layer rules (ARCHITECTURE.md)', () => {
  it('kinetics/ imports no Node module, no DOM, no Electron, no platform package', () => {
    expect(layerViolations(root, 'kinetics', false)).toEqual([]);
  });

  it('renderer/ imports no Node module and no Electron', () => {
    expect(layerViolations(root, 'renderer', true).filter((v) => !v.file.endsWith('vite.config.ts'))).toEqual([]);
  });

  // Negative controls: the check does catch what it is meant to catch.
  it('flags a Node import, a dynamic Electron import, a require and a DOM global', () => {
    const src = [
      "import { readFileSync } from 'node:fs';",
      "import type { X } from 'fs';",
      "const e = await import('electron');",
      "const s = require('serialport');",
      'document.title = "x";',
      '// window.alert() in a comment is fine',
    ].join('\n');
    const v = pureLayerViolations('x.ts', src, false);
    expect(v.map((x) => x.line)).toEqual([1, 2, 3, 4, 5]);
  });

  it('lets a pure relative import through', () => {
    expect(pureLayerViolations('x.ts', "import { fit } from './fit/levenbergMarquardt';", false)).toEqual([]);
  });
});
