import { defineConfig } from 'vitest/config';

// One suite for the whole project. End-to-end tests (real Chromium, socat pty pairs,
// killed processes) live under test/ and need more time than the unit tests beside
// the code; the machines are small (2 cores), so workers are capped.
export default defineConfig({
  test: {
    include: ['{kinetics,acquisition,main,renderer,test}/**/*.test.ts'],
    exclude: ['node_modules/**', 'test/bench/**'],
    testTimeout: 30_000,
    hookTimeout: 60_000,
    pool: 'forks',
    maxWorkers: 2,
    reporters: ['default', './test/closingLineReporter.ts'],
  },
});
