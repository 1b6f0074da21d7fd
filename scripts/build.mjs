// Bundles the CLI/server and the VS Code extension with esbuild (one file each, fast start-up), and
// writes the project file's JSON Schema (schemas/, client/schemas/) from the rule registry.
import { build } from 'esbuild';
import { existsSync, mkdirSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { createRequire } from 'node:module';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
// absWorkingDir: module paths in the bundle (its `// path` comments, the source map) are relative to
// the repository root whichever folder runs the build (npm runs `prepare` from server/).
const common = {
  bundle: true,
  platform: 'node',
  target: 'node20',
  format: 'cjs',
  sourcemap: 'linked',
  logLevel: 'warning',
  absWorkingDir: root,
  // jsonc-parser's UMD build hides its requires from the bundler; its ESM build bundles cleanly.
  mainFields: ['module', 'main'],
};
await build({ ...common, entryPoints: [join(root, 'server/src/cli/entry.ts')], outfile: join(root, 'server/dist/noiselint.js') });
// The worker-thread entry of `check` (cli/checkWorker.ts), loaded from beside the bundle.
await build({ ...common, entryPoints: [join(root, 'server/src/cli/checkWorker.ts')], outfile: join(root, 'server/dist/checkWorker.js') });

// The schema module is bundled in memory and evaluated as CommonJS (its dependencies are CJS).
const schemaModule = await build({
  ...common,
  entryPoints: [join(root, 'server/src/workspace/projectSchema.ts')],
  write: false,
  sourcemap: false,
});
const loaded = { exports: {} };
new Function('module', 'exports', 'require', schemaModule.outputFiles[0].text)(loaded, loaded.exports, createRequire(import.meta.url));
const { projectFileSchemaText, PROJECT_SCHEMA_FILE } = loaded.exports;
for (const folder of ['schemas', 'client/schemas']) {
  mkdirSync(join(root, folder), { recursive: true });
  writeFileSync(join(root, folder, PROJECT_SCHEMA_FILE), projectFileSchemaText());
}

if (existsSync(join(root, 'client/src/extension.ts')) && existsSync(join(root, 'client/build.mjs'))) {
  await import('../client/build.mjs');
}
