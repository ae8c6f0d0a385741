'use strict';
// A stand-in for `rill lsp`, used only by activation.test.js to check the
// client side of the contract (settings, rill.run, showDocument,
// diagnostics) while the real server is being written. It implements no rill
// semantics: it reports one fixed diagnostic per opened document (on the
// first line holding `kx =`, else the first line) and a fixed hover.
const fs = require('fs');
const { fileURLToPath, pathToFileURL } = require('url');
const path = require('path');
const {
  createConnection, ProposedFeatures, TextDocumentSyncKind, DiagnosticSeverity,
} = require('vscode-languageserver/node');

// Streams given explicitly: the client starts `<path> lsp` with no `--stdio`.
const connection = createConnection(ProposedFeatures.all, process.stdin, process.stdout);
const seen = { argv: process.argv.slice(2), initializationOptions: null, configurationChanges: [], executed: [], opened: [], showDocumentSupported: false };

connection.onInitialize((params) => {
  seen.initializationOptions = params.initializationOptions ?? null;
  seen.showDocumentSupported = params.capabilities?.window?.showDocument?.support === true;
  return {
    capabilities: {
      textDocumentSync: TextDocumentSyncKind.Full,
      hoverProvider: true,
      executeCommandProvider: { commands: ['rill.run'] },
    },
    serverInfo: { name: 'rill stand-in' },
  };
});

connection.onDidOpenTextDocument((p) => {
  seen.opened.push(p.textDocument.uri);
  const line = Math.max(0, p.textDocument.text.split('\n').findIndex((l) => /\bkx\s*=/.test(l)));
  connection.sendDiagnostics({
    uri: p.textDocument.uri,
    diagnostics: [{
      range: { start: { line, character: 0 }, end: { line, character: 1 } },
      severity: DiagnosticSeverity.Error,
      code: 'stand-in.check',
      source: 'rill',
      message: 'stand-in diagnostic',
    }],
  });
});

connection.onHover(() => ({ contents: { kind: 'markdown', value: 'stand-in hover' } }));

connection.onDidChangeConfiguration((p) => { seen.configurationChanges.push(p.settings); });

connection.onExecuteCommand(async (p) => {
  seen.executed.push({ command: p.command, arguments: p.arguments ?? [] });
  if (p.command !== 'rill.run') throw new Error(`unknown command ${p.command}`);
  // Like `rill lsp`: results in <deck name>.out/ beside the deck, and no
  // result value (the run goes on in the background).
  const deck = fileURLToPath(String(p.arguments?.[0] ?? ''));
  const outDir = path.join(path.dirname(deck), `${path.basename(deck, '.rill')}.out`);
  fs.mkdirSync(outDir, { recursive: true });
  const report = path.join(outDir, 'report.html');
  fs.writeFileSync(report, '<!doctype html><title>stand-in report</title>\n');
  // RILL_STAND_IN_NO_SHOW=1: behave like a server that never sends showDocument.
  if (seen.showDocumentSupported && process.env.RILL_STAND_IN_NO_SHOW !== '1') {
    await connection.window.showDocument({ uri: pathToFileURL(report).toString(), external: true });
  }
  return null;
});

connection.onRequest('rillTest/seen', () => seen);
// Leave through process.exit so the 'exit' clean-up runs, however we are stopped.
process.on('SIGTERM', () => process.exit(0));
process.stdin.on('end', () => process.exit(0));
connection.listen();
