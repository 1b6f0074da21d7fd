// Builds the VS Code extension: the extension bundle (dist/extension.js), the plot view's webview
// bundle (media/plot.js, chart.js inside: the webview loads nothing from the network) and a copy of
// the bundled language server (dist/server.js) so the .vsix is self-contained.
// Run from any folder: `node client/build.mjs [--production]`; scripts/build.mjs imports it too.
import { build } from 'esbuild';
import { existsSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
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

// Rule ids link to pages only under an https base (noiselint.docsBaseUrl); no pages travel with
// the package. Remove the folder older builds left behind.
rmSync(join(here, 'docs'), { recursive: true, force: true });
