// Builds the VS Code extension: the extension bundle (dist/extension.js), the plot view's webview
// bundle (media/plot.js, chart.js inside: the webview loads nothing from the network) and a copy of
// the bundled language server (dist/server.js) so the .vsix is self-contained.
// Run from any folder: `node client/build.mjs [--production]`; scripts/build.mjs imports it too.
import { build } from 'esbuild';
import { cpSync, existsSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const here = dirname(fileURLToPath(import.meta.url));
const root = join(here, '..');
const production = process.argv.includes('--production');

mkdirSync(join(here, 'dist'), { recursive: true });

await Promise.all([
  build({
    entryPoints: [join(here, 'src/extension.ts')],
    outfile: join(here, 'dist/extension.js'),
    bundle: true,
    platform: 'node',
    target: 'node20',
    format: 'cjs',
    external: ['vscode'],
    minify: production,
    sourcemap: production ? false : 'linked',
    logLevel: 'warning',
  }),
  build({
    entryPoints: [join(here, 'src/webview/plot.ts')],
    outfile: join(here, 'media/plot.js'),
    bundle: true,
    platform: 'browser',
    target: 'es2022',
    format: 'iife',
    minify: production,
    sourcemap: false,
    logLevel: 'warning',
  }),
]);

// The language server is the CLI bundle (`noiselint lsp --stdio`). The root build makes it; build
// it here when it is missing so `npm --workspace client run package` also works on its own.
const serverBundle = join(root, 'server/dist/noiselint.js');
if (!existsSync(serverBundle)) {
  await build({
    entryPoints: [join(root, 'server/src/cli/main.ts')],
    outfile: serverBundle,
    bundle: true,
    platform: 'node',
    target: 'node20',
    format: 'cjs',
    logLevel: 'warning',
  });
}
// The map stays out of the package (set NOISELINT_SERVER_PATH=server/dist/noiselint.js to debug
// the server with its map); drop the comment that points at it.
const text = readFileSync(serverBundle, 'utf8').replace(/\n\/\/# sourceMappingURL=\S+\s*$/, '\n');
writeFileSync(join(here, 'dist/server.js'), text);

// The rule pages (generated into docs/rules by `npm run docs`) travel with the package: the server
// links each finding's rule id to <extension>/docs/rules/<id>.md when that folder exists.
const rulePages = join(root, 'docs/rules');
const packagedPages = join(here, 'docs/rules');
rmSync(join(here, 'docs'), { recursive: true, force: true });
if (existsSync(rulePages)) {
  mkdirSync(packagedPages, { recursive: true });
  cpSync(rulePages, packagedPages, { recursive: true, filter: (source) => !source.endsWith('~') });
}
