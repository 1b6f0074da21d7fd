#!/usr/bin/env node
'use strict';
// Runs the bundled CLI. `npm install` at the repository root builds it (the prepare script).
const path = require('node:path');
const fs = require('node:fs');
const bundle = path.join(__dirname, '..', 'dist', 'noiselint.js');
if (!fs.existsSync(bundle)) {
  process.stderr.write('noiselint: the CLI is not built yet; run `npm run build` at the repository root\n');
  process.exit(2);
}
require(bundle);
