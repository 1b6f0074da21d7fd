import { defineConfig } from 'vitest/config';

// Two projects. `fast` is the inner loop (in-process tests of the analysis, rules, fixes, docs,
// CLI, workspace, run pairs and consumer dialects; `npm run test:fast`). `slow` is everything else
// under test/: adversarial inputs, load, fuzzing, safety, the packed package and the tests that
// drive a real LSP server process. `npm test` and CI run both. A new folder under test/ lands in
// `slow` until it is listed here. `fast` runs its files in one module graph (isolate: false):
// importing the server once instead of once per file saves more than half its time, so its tests
// must leave no global state changed.
const FAST = ['unit', 'rules', 'fix', 'architecture', 'reference', 'workspace', 'cli', 'run', 'consumers'].map((dir) => `test/${dir}/**/*.test.ts`);
const NEVER = ['test/e2e/**', '**/node_modules/**'];

export default defineConfig({
  test: {
    testTimeout: 60_000,
    hookTimeout: 60_000,
    projects: [
      { extends: true, test: { name: 'fast', include: FAST, exclude: NEVER, isolate: false } },
      { extends: true, test: { name: 'slow', include: ['test/**/*.test.ts'], exclude: [...NEVER, ...FAST] } },
    ],
  },
});
