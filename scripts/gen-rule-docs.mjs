// Writes docs/rules/<id>.md, docs/rules/README.md and the per-rule settings of client/package.json
// from the rules' metadata
// (server/src/rules/docs.ts, bundled in memory with esbuild). `npm run docs`.
// With --check, writes nothing and exits 1 when a page differs.
import { build } from 'esbuild';
import { mkdirSync, readdirSync, readFileSync, rmSync, writeFileSync, existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const outDir = join(root, 'docs', 'rules');
const check = process.argv.includes('--check');

const bundle = await build({
  entryPoints: [join(root, 'server/src/rules/docs.ts')],
  bundle: true,
  write: false,
  platform: 'node',
  format: 'esm',
  target: 'node20',
  logLevel: 'warning',
});
const code = bundle.outputFiles[0].text;
const { renderRuleDocPages, ruleSettingsSchema } = await import(`data:text/javascript;base64,${Buffer.from(code).toString('base64')}`);
const pages = renderRuleDocPages();

let stale = 0;
if (!check) mkdirSync(outDir, { recursive: true });
for (const [name, content] of Object.entries(pages)) {
  const path = join(outDir, name);
  const current = existsSync(path) ? readFileSync(path, 'utf8') : null;
  if (current === content) continue;
  stale++;
  if (check) console.error(`docs/rules/${name} is out of date`);
  else writeFileSync(path, content);
}
// Pages of rules that no longer exist.
if (existsSync(outDir)) {
  for (const name of readdirSync(outDir)) {
    if (name.endsWith('.md') && !(name in pages)) {
      stale++;
      if (check) console.error(`docs/rules/${name} belongs to no rule`);
      else rmSync(join(outDir, name));
    }
  }
}
// The per-rule editor settings of the extension's manifest.
const manifestPath = join(root, 'client', 'package.json');
const manifestText = readFileSync(manifestPath, 'utf8');
const manifest = JSON.parse(manifestText);
const settings = manifest.contributes.configuration.properties;
const schema = ruleSettingsSchema();
settings['noiselint.rules'].properties = schema.severities;
settings['noiselint.thresholds'].properties = schema.thresholds;
const manifestOut = `${JSON.stringify(manifest, null, 2)}\n`;
if (manifestOut !== manifestText) {
  stale++;
  if (check) console.error('client/package.json: the rule settings are out of date');
  else writeFileSync(manifestPath, manifestOut);
}
if (check && stale > 0) {
  console.error('run `npm run docs` to regenerate');
  process.exit(1);
}
console.log(check ? 'docs/rules is up to date' : `docs/rules: ${Object.keys(pages).length} pages (${stale} changed)`);
