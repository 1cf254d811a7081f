// What Electron loads (package.json "main"): bundle the shell from the TypeScript
// sources, then run the bundle. See main/electron/bundle.cjs for why it is bundled.
'use strict';
const path = require('node:path');
const { bundleShell } = require('./electron/bundle.cjs');

const { main } = bundleShell(path.join(__dirname, '..'));
require(main);
