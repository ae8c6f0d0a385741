'use strict';
// Loads the compiled extension against fake-vscode.js and drives it.
const Module = require('module');
const fs = require('fs');
const os = require('os');
const path = require('path');

const fakePath = require.resolve('./fake-vscode');
const originalResolve = Module._resolveFilename;
Module._resolveFilename = function resolve(request, ...rest) {
  if (request === 'vscode') return fakePath;
  return originalResolve.call(this, request, ...rest);
};

const vscode = require('vscode');
const extensionMain = path.resolve(__dirname, '../../out/extension.js');
if (!fs.existsSync(extensionMain)) {
  throw new Error(`${extensionMain} is missing: run \`npx tsc -p ./\` in editors/vscode first`);
}
const extension = require(extensionMain);
const { state, makeDocument } = vscode.__test;

/** Polls `probe` until it returns a truthy value, or fails after `ms`. */
async function waitFor(what, probe, ms) {
  const deadline = Date.now() + ms;
  for (;;) {
    const value = await probe();
    if (value) return value;
    if (Date.now() > deadline) throw new Error(`timed out after ${ms} ms waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

function withTimeout(promise, ms, what) {
  let timer;
  return Promise.race([
    promise,
    new Promise((_, reject) => { timer = setTimeout(() => reject(new Error(`timed out after ${ms} ms: ${what}`)), ms); }),
  ]).finally(() => clearTimeout(timer));
}

/**
 * Activates the extension with the given `rill.*` settings, a workspace
 * folder and documents already open. Returns a handle whose stop() always
 * ends the server process, even when the polite shutdown fails.
 */
async function startExtension({ configuration, folder, documents }) {
  state.configuration = { ...configuration };
  state.workspaceFolders = [{ uri: vscode.Uri.file(folder), name: path.basename(folder), index: 0 }];
  state.documents = documents.map((d) => makeDocument(d.file, 'rill', d.text));
  state.diagnostics.clear();
  state.openedExternally.length = 0;
  state.webviews.length = 0;
  state.uiKind = vscode.UIKind.Desktop;
  state.remoteName = undefined;
  state.messages.length = 0;
  state.informationAnswer = undefined;
  const context = { subscriptions: [], extensionPath: path.resolve(__dirname, '../..') };
  const handle = {
    context,
    api: undefined,
    async stop() {
      const client = handle.api?.client();
      const child = client?._serverProcess;
      try {
        await withTimeout(Promise.resolve(extension.deactivate()), 8000, 'deactivate');
      } catch (err) {
        process.stderr.write(`deactivate: ${err.message}\n`);
      } finally {
        for (const d of context.subscriptions.splice(0)) {
          try { d.dispose(); } catch { /* already gone */ }
        }
        const alive = () => child && child.exitCode === null && child.signalCode === null;
        // Give the server a moment to act on `exit`, then make sure it is gone.
        if (alive()) {
          await new Promise((resolve) => {
            const timer = setTimeout(resolve, 2000);
            child.once('exit', () => { clearTimeout(timer); resolve(); });
          });
        }
        if (alive()) child.kill('SIGKILL');
      }
    },
  };
  handle.api = await withTimeout(extension.activate(context), 20000, 'activate');
  return handle;
}

const tempDirs = [];
process.on('exit', () => {
  for (const d of tempDirs) fs.rmSync(d, { recursive: true, force: true });
});

/** A fresh folder under the system temp dir, removed when the process exits. */
function tempDir(prefix) {
  const d = fs.mkdtempSync(path.join(os.tmpdir(), prefix));
  tempDirs.push(d);
  return d;
}

module.exports = { vscode, extension, state, waitFor, withTimeout, startExtension, tempDir };
