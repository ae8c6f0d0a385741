'use strict';
// The extension against the real `rill lsp`: start it over stdio, open a copy
// of examples/larkspur-east.rill with a deliberate unit error, and wait for
// the diagnostic. Skips itself while `rill lsp` is not available (binary
// missing, or `rill lsp --help` exits non-zero).
// Binary: $RILL_BIN, else <repo>/target/debug/rill (cargo build -p rill-cli), else `rill` on PATH.
const test = require('node:test');
const assert = require('node:assert/strict');
const fs = require('fs');
const path = require('path');
const { spawnSync } = require('child_process');
const { vscode, state, waitFor, startExtension, tempDir } = require('./harness');

const repo = path.resolve(__dirname, '../../../..');

function findRill() {
  if (process.env.RILL_BIN) return process.env.RILL_BIN;
  const built = path.join(repo, 'target', 'debug', process.platform === 'win32' ? 'rill.exe' : 'rill');
  return fs.existsSync(built) ? built : 'rill';
}

function lspUnavailable(bin) {
  const r = spawnSync(bin, ['lsp', '--help'], { stdio: ['ignore', 'pipe', 'pipe'], timeout: 15000 });
  if (r.error) return `\`${bin}\` could not be run (${r.error.code || r.error.message})`;
  if (r.status !== 0) return `\`${bin} lsp --help\` exited with ${r.status ?? r.signal}`;
  return null;
}

const bin = findRill();
const reason = lspUnavailable(bin);

test('extension gets diagnostics from the real rill lsp', { timeout: 90000, skip: reason ? `rill lsp not available: ${reason}` : false }, async () => {
  const dir = tempDir('rill-lsp-');
  const source = fs.readFileSync(path.join(repo, 'examples', 'larkspur-east.rill'), 'utf8');
  const broken = source.replace('kx = layers [150 40 300 90] md', 'kx = 150 psi');
  assert.notEqual(broken, source, 'the example still has the kx line this test edits');
  const deck = path.join(dir, 'larkspur-east.rill');
  fs.writeFileSync(deck, broken);

  const ext = await startExtension({
    configuration: { path: bin, 'inlayHints.enabled': true, allowedIncludePaths: [], runOutputDir: null },
    folder: dir,
    documents: [{ file: deck, text: broken }],
  });
  try {
    const client = ext.api.client();
    assert.ok(client, `the language client started \`${bin} lsp\``);
    const uri = vscode.Uri.file(deck).toString();
    const diags = await waitFor('diagnostics from rill lsp', () => {
      const d = state.diagnostics.get(uri);
      return d && d.length > 0 ? d : undefined;
    }, 30000);
    for (const d of diags) {
      process.stdout.write(`# ${d.range.start.line + 1}:${d.range.start.character + 1} ${String(d.code?.value ?? d.code)} ${d.message}\n`);
    }
    const unit = diags.find((d) => String(d.code?.value ?? d.code) === 'unit.dimension');
    assert.ok(unit, 'kx = 150 psi is reported as unit.dimension');
    const kxLine = broken.split('\n').findIndex((l) => l.includes('kx = 150 psi'));
    assert.equal(unit.range.start.line, kxLine);

    // Hover on the key `viscosity`.
    const line = broken.split('\n').findIndex((l) => /^\s*viscosity\s*=/.test(l));
    const character = broken.split('\n')[line].indexOf('viscosity') + 2;
    const hover = await client.sendRequest('textDocument/hover', { textDocument: { uri }, position: { line, character } });
    assert.ok(hover && hover.contents, 'a hover on viscosity');
    process.stdout.write(`# hover: ${JSON.stringify(hover.contents).slice(0, 200)}\n`);
  } finally {
    await ext.stop();
  }
});

test('Run case on the teaching block opens report.html', { timeout: 180000, skip: reason ? `rill lsp not available: ${reason}` : false }, async () => {
  const dir = tempDir('rill-lsp-run-');
  const deck = path.join(dir, 'teaching-block.rill');
  fs.copyFileSync(path.join(repo, 'examples', 'teaching-block.rill'), deck);
  const ext = await startExtension({
    configuration: { path: bin },
    folder: dir,
    documents: [{ file: deck, text: fs.readFileSync(deck, 'utf8') }],
  });
  try {
    assert.ok(ext.api.client(), `the language client started \`${bin} lsp\``);
    const uri = vscode.Uri.file(deck).toString();
    // Let the first analysis finish (a clean deck may publish an empty list,
    // or nothing at all: then go on after 10 s).
    await waitFor('diagnostics for the deck', () => state.diagnostics.has(uri), 10000).catch(() => undefined);
    await vscode.commands.executeCommand('rill.runCase', vscode.Uri.file(deck));
    const report = path.join(dir, 'teaching-block.out', 'report.html');
    const opened = await waitFor('report.html opened after the run', () => state.openedExternally[0], 150000);
    assert.equal(vscode.Uri.parse(opened).fsPath, report);
    assert.ok(fs.statSync(report).size > 0);
    assert.deepEqual(state.messages.filter(([kind]) => kind === 'error'), []);
  } finally {
    await ext.stop();
  }
});
