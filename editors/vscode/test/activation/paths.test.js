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
