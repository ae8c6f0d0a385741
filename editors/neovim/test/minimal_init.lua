-- Minimal init for the headless checks: only editors/neovim on the
-- runtimepath, rill set up with $RILL_LSP_CMD (a command line, split on
-- spaces) or `<repo>/target/debug/rill lsp`; RILL_NO_LSP=1 leaves the server out.
local here = debug.getinfo(1, 'S').source:sub(2)
local plugin = vim.fn.fnamemodify(here, ':p:h:h')
local repo = vim.fn.fnamemodify(plugin, ':h:h')
vim.opt.runtimepath:prepend(plugin)
vim.opt.swapfile = false
vim.opt.shadafile = 'NONE'
vim.cmd('filetype plugin on')
vim.cmd('syntax on')
-- ftdetect/ on a runtimepath added this late is not sourced by itself.
vim.cmd('runtime! ftdetect/rill.lua')

-- The syntax check needs no server.
if os.getenv('RILL_NO_LSP') == '1' then
  return
end

local cmd = { repo .. '/target/debug/rill', 'lsp' }
local env = os.getenv('RILL_LSP_CMD')
if env and env ~= '' then
  cmd = vim.split(env, ' ', { trimempty = true })
end
require('rill').setup({
  cmd = cmd,
  settings = { inlayHints = { enabled = true }, allowedIncludePaths = {} },
})
