'use strict';
// Where the extension looks for report.html when the server does not say:
// the placement `rill lsp` uses for `rill.run` results.
const test = require('node:test');
const assert = require('node:assert/strict');
const { extension } = require('./harness');

const settings = (runOutputDir) => ({ inlayHints: { enabled: true }, allowedIncludePaths: [], runOutputDir });

test('report beside the deck by default', () => {
  assert.equal(extension.expectedReportPath('/w/cases/larkspur-east.rill', settings(null), '/w'),
    '/w/cases/larkspur-east.out/report.html');
});

test('relative runOutputDir is taken from the workspace folder', () => {
  assert.equal(extension.expectedReportPath('/w/cases/larkspur-east.rill', settings('runs'), '/w'),
    '/w/runs/larkspur-east.out/report.html');
});

test('relative runOutputDir without a workspace folder is taken from the deck folder', () => {
  assert.equal(extension.expectedReportPath('/w/cases/larkspur-east.rill', settings('runs'), undefined),
    '/w/cases/runs/larkspur-east.out/report.html');
});

test('absolute runOutputDir', () => {
  assert.equal(extension.expectedReportPath('/w/cases/tamsin-ridge.rill', settings('/scratch/out'), '/w'),
    '/scratch/out/tamsin-ridge.out/report.html');
});

test('rill.path: bare names stay for PATH lookup, relative paths come from the workspace folder', () => {
  const { vscode, state } = require('./harness');
  const os = require('os');
  state.workspaceFolders = [{ uri: vscode.Uri.file('/w'), name: 'w', index: 0 }];
  state.configuration = {};
  assert.equal(extension.serverCommand(), 'rill');
  state.configuration = { path: 'target/debug/rill' };
  assert.equal(extension.serverCommand(), '/w/target/debug/rill');
  state.configuration = { path: '/opt/rill/bin/rill' };
  assert.equal(extension.serverCommand(), '/opt/rill/bin/rill');
  state.configuration = { path: '~/.cargo/bin/rill' };
  assert.equal(extension.serverCommand(), `${os.homedir()}/.cargo/bin/rill`);
  state.configuration = { path: '  ' };
  assert.equal(extension.serverCommand(), 'rill');
});

test('isExecutable looks on PATH for bare names and checks the file itself otherwise', () => {
  assert.equal(extension.isExecutable('sh'), true);
  assert.equal(extension.isExecutable(process.execPath), true);
  assert.equal(extension.isExecutable('/nonexistent/rill'), false);
  assert.equal(extension.isExecutable('surely-not-a-command-on-path-rill'), false);
  assert.equal(extension.isExecutable(__filename), false, 'a file without the execute bit');
});

test('settings sent to the server drop blank runOutputDir and non-string include paths', () => {
  const { state } = require('./harness');
  state.configuration = { 'inlayHints.enabled': false, allowedIncludePaths: ['/a', 3, '/b'], runOutputDir: '   ' };
  assert.deepEqual(extension.readSettings(), { inlayHints: { enabled: false }, allowedIncludePaths: ['/a', '/b'], runOutputDir: null });
});
