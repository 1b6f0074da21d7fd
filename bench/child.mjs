#!/usr/bin/env node
// One measurement in a process of its own, for peak memory and end-to-end figures:
//   node bench/child.mjs plain|ajv <dir>
// Needs the harness bundle that bench/run.mjs builds (build/bench/harness.mjs).
import { readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
process.env.NOISELINT_REPO = root;
const [what, dir] = process.argv.slice(2);
const H = await import(pathToFileURL(join(root, 'build/bench/harness.mjs')).href);
if (what === 'plain') H.plainParse(dir);
else if (what === 'ajv') H.schemaValidator(JSON.parse(readFileSync(join(root, 'bench/schema.json'), 'utf8')))(dir);
else throw new Error(`unknown measurement ${what}`);
