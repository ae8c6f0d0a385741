'use strict';
// The client side of the `rill lsp` contract, checked against a stand-in
// server (stand-in-server.js): the command line, initializationOptions,
// didChangeConfiguration under `rill`, `rill.run` with the document URI, and
// report.html opened from window/showDocument.
const test = require('node:test');
const assert = require('node:assert/strict');
const fs = require('fs');
const path = require('path');
const { vscode, state, waitFor, withTimeout, startExtension, tempDir } = require('./harness');

test('extension drives a stand-in rill lsp over stdio', { timeout: 60000 }, async () => {
  const dir = tempDir('rill-activation-');
  const wrapper = path.join(dir, 'rill');
  fs.writeFileSync(wrapper, `#!/bin/sh\nexec "${process.execPath}" "${path.join(__dirname, 'stand-in-server.js')}" "$@"\n`, { mode: 0o755 });
  const deck = path.join(dir, 'pilot.rill');
  fs.writeFileSync(deck, 'grid { cells = 2 x 2 x 1 }\n');

  const ext = await startExtension({
    configuration: {
      path: wrapper,
      'inlayHints.enabled': false,
      allowedIncludePaths: ['/data/shared-decks'],
      runOutputDir: '',
    },
    folder: dir,
    documents: [{ file: deck, text: fs.readFileSync(deck, 'utf8') }],
  });
  try {
    const client = ext.api.client();
    assert.ok(client, 'the language client started');
    assert.equal(client.isRunning(), true);
    const seen = () => withTimeout(client.sendRequest('rillTest/seen'), 5000, 'rillTest/seen');

    const first = await seen();
    assert.deepEqual(first.argv, ['lsp'], 'the server is started as `<rill.path> lsp`');
    assert.deepEqual(first.initializationOptions, {
      inlayHints: { enabled: false },
      allowedIncludePaths: ['/data/shared-decks'],
      runOutputDir: null,
    });
    assert.equal(first.showDocumentSupported, true);

    // The open document is synced and its diagnostics reach the editor.
    const uri = vscode.Uri.file(deck).toString();
    const diags = await waitFor('diagnostics for the open deck', () => state.diagnostics.get(uri), 10000);
    assert.equal(diags.length, 1);
    assert.equal(diags[0].message, 'stand-in diagnostic');
    assert.equal(diags[0].severity, vscode.DiagnosticSeverity.Error);

    // A settings change is pushed under the `rill` section.
    state.configuration['inlayHints.enabled'] = true;
    state.configuration.runOutputDir = 'runs';
    state.events.didChangeConfiguration.fire({ affectsConfiguration: (s) => s === 'rill' || s === 'rill.inlayHints.enabled' || s === 'rill.runOutputDir' });
    const changed = await waitFor('didChangeConfiguration', async () => (await seen()).configurationChanges[0], 10000);
    assert.deepEqual(changed, {
      rill: { inlayHints: { enabled: true }, allowedIncludePaths: ['/data/shared-decks'], runOutputDir: 'runs' },
    });

    // "rill: Run case" calls rill.run with the document URI; the server's
    // showDocument for report.html opens it outside the editor.
    await withTimeout(vscode.commands.executeCommand('rill.runCase', vscode.Uri.file(deck)), 10000, 'rill.runCase');
    const after = await seen();
    assert.deepEqual(after.executed, [{ command: 'rill.run', arguments: [uri] }]);
    const opened = await waitFor('report.html opened', () => state.openedExternally[0], 10000);
    assert.equal(opened, vscode.Uri.file(path.join(dir, 'pilot.out', 'report.html')).toString());
    assert.deepEqual(state.messages.filter(([kind]) => kind === 'error'), []);

    // The server's own command (as the "Run case" code lens calls it) goes
    // through the same path.
    await withTimeout(vscode.commands.executeCommand('rill.run', uri), 10000, 'rill.run');
    assert.equal((await seen()).executed.length, 2);
  } finally {
    await ext.stop();
  }
  assert.equal(ext.api.client(), undefined, 'the client is gone after deactivate');
});

test('without showDocument, the report is offered when it is written', { timeout: 60000 }, async () => {
  const dir = tempDir('rill-activation-fallback-');
  const wrapper = path.join(dir, 'rill');
  fs.writeFileSync(wrapper, `#!/bin/sh\nRILL_STAND_IN_NO_SHOW=1 exec "${process.execPath}" "${path.join(__dirname, 'stand-in-server.js')}" "$@"\n`, { mode: 0o755 });
  const deck = path.join(dir, 'pilot.rill');
  fs.writeFileSync(deck, 'grid { cells = 2 x 2 x 1 }\n');
  const ext = await startExtension({
    configuration: { path: wrapper },
    folder: dir,
    documents: [{ file: deck, text: fs.readFileSync(deck, 'utf8') }],
  });
  try {
    state.informationAnswer = 'Open report';
    const result = await withTimeout(vscode.commands.executeCommand('rill.runCase', vscode.Uri.file(deck)), 10000, 'rill.runCase');
    assert.equal(result, null, 'rill.run answers at once; the run goes on in the background');
    const opened = await waitFor('the fallback to open report.html', () => state.openedExternally[0], 15000);
    assert.equal(opened, vscode.Uri.file(path.join(dir, 'pilot.out', 'report.html')).toString());
    assert.ok(state.messages.some(([kind, m]) => kind === 'info' && /run finished/.test(m)));
  } finally {
    await ext.stop();
  }
});

for (const [where, setUp] of [
  ['a browser VS Code (code-server)', () => { state.uiKind = vscode.UIKind.Web; }],
  ['a remote window', () => { state.remoteName = 'ssh-remote'; }],
]) {
  test(`in ${where} the report opens in a VS Code tab, not the system browser`, { timeout: 60000 }, async () => {
    const dir = tempDir('rill-activation-tab-');
    const wrapper = path.join(dir, 'rill');
    fs.writeFileSync(wrapper, `#!/bin/sh\nexec "${process.execPath}" "${path.join(__dirname, 'stand-in-server.js')}" "$@"\n`, { mode: 0o755 });
    const deck = path.join(dir, 'pilot.rill');
    fs.writeFileSync(deck, 'grid { cells = 2 x 2 x 1 }\n');
    const ext = await startExtension({
      configuration: { path: wrapper },
      folder: dir,
      documents: [{ file: deck, text: fs.readFileSync(deck, 'utf8') }],
    });
    setUp();
    try {
      await withTimeout(vscode.commands.executeCommand('rill.runCase', vscode.Uri.file(deck)), 10000, 'rill.runCase');
      const panel = await waitFor('a report tab', () => state.webviews[0]?.html && state.webviews[0], 10000);
      assert.equal(panel.viewType, 'rill.report');
      assert.equal(panel.title, 'rill report: pilot');
      assert.equal(panel.options.enableScripts, false);
      assert.equal(panel.html, fs.readFileSync(path.join(dir, 'pilot.out', 'report.html'), 'utf8'));
      assert.deepEqual(state.openedExternally, []);
      // A second run refreshes the same tab.
      fs.rmSync(path.join(dir, 'pilot.out'), { recursive: true });
      await withTimeout(vscode.commands.executeCommand('rill.runCase', vscode.Uri.file(deck)), 10000, 'rill.runCase');
      await waitFor('the tab revealed again', () => panel.revealed === 1, 10000);
      assert.equal(state.webviews.length, 1);
      assert.deepEqual(state.messages.filter(([kind]) => kind === 'error'), []);
    } finally {
      await ext.stop();
    }
    assert.equal(state.webviews[0].disposed, true, 'the tab closes with the extension');
  });
}

test('a missing binary is reported, not thrown', { timeout: 30000 }, async () => {
  const dir = tempDir('rill-activation-missing-');
  const ext = await startExtension({
    configuration: { path: path.join(dir, 'no-such-rill') },
    folder: dir,
    documents: [],
  });
  try {
    assert.equal(ext.api.client(), undefined);
    const errors = state.messages.filter(([kind]) => kind === 'error').map(([, m]) => m);
    assert.equal(errors.length, 1);
    assert.match(errors[0], /could not start the language server .*no-such-rill lsp.*not found/);
  } finally {
    await ext.stop();
  }
});
