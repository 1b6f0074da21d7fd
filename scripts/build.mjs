// Bundles the CLI/server and the VS Code extension with esbuild (one file each, fast start-up).
import { build } from 'esbuild';
import { existsSync } from 'node:fs';

const common = { bundle: true, platform: 'node', target: 'node20', format: 'cjs', sourcemap: 'linked', logLevel: 'warning',
  // jsonc-parser's UMD build hides its requires from the bundler; its ESM build bundles cleanly.
  mainFields: ['module', 'main'] };
await build({ ...common, entryPoints: ['server/src/cli/entry.ts'], outfile: 'server/dist/noiselint.js' });
if (existsSync('client/src/extension.ts') && existsSync('client/build.mjs')) {
  await import('../client/build.mjs');
}
