// Preloaded with `node --require test/safety/no-network.cjs ...`: every way out to the network
// (and every way to start a process) throws
// (and is logged to stderr with a marker), so a test can prove a command never tries.
'use strict';
const MARK = 'NOISELINT-NETWORK-ATTEMPT';
function refuse(what) {
  return function () {
    process.stderr.write(`${MARK}: ${what}\n`);
    throw new Error(`${MARK}: ${what} is not allowed`);
  };
}
const net = require('node:net');
const tls = require('node:tls');
const dgram = require('node:dgram');
const dns = require('node:dns');
const http = require('node:http');
const https = require('node:https');
net.connect = net.createConnection = refuse('net.connect');
net.Socket.prototype.connect = refuse('net.Socket.connect');
tls.connect = refuse('tls.connect');
dgram.createSocket = refuse('dgram.createSocket');
dns.lookup = refuse('dns.lookup');
dns.resolve = refuse('dns.resolve');
dns.promises.lookup = refuse('dns.promises.lookup');
dns.promises.resolve = refuse('dns.promises.resolve');
http.request = http.get = refuse('http.request');
https.request = https.get = refuse('https.request');
if (typeof globalThis.fetch === 'function') globalThis.fetch = refuse('fetch');
if (typeof globalThis.WebSocket === 'function') globalThis.WebSocket = refuse('WebSocket');

// And no child processes: noiselint never starts one (a config must not be able to run anything).
const SUB = 'NOISELINT-SUBPROCESS-ATTEMPT';
const childProcess = require('node:child_process');
for (const name of ['spawn', 'spawnSync', 'exec', 'execSync', 'execFile', 'execFileSync', 'fork']) {
  childProcess[name] = function () {
    process.stderr.write(`${SUB}: child_process.${name}\n`);
    throw new Error(`${SUB}: child_process.${name} is not allowed`);
  };
}
