-- rill language server (`rill lsp`) for Neovim's built-in LSP client.
--
--   require('rill').setup({
--     cmd = { 'rill', 'lsp' },              -- or { '/path/to/rill', 'lsp' }
--     settings = {                          -- the server's `rill` section
--       inlayHints = { enabled = true },
--       allowedIncludePaths = {},
--       runOutputDir = nil,                 -- default: <deck name>.out/ beside the deck
--     },
--   })
--
-- Works from Neovim 0.7 (vim.lsp.start_client) and uses vim.lsp.start on 0.8+.
-- Commands: :RillRun (runs the case through the server's `rill.run`), :RillReport.
local M = {}

local defaults = {
  cmd = { 'rill', 'lsp' },
  settings = {
    inlayHints = { enabled = true },
    allowedIncludePaths = {},
    runOutputDir = nil,
  },
  -- Called as on_attach(client, bufnr) after the built-in set-up.
  on_attach = nil,
  -- Extra client capabilities, merged over Neovim's defaults.
  capabilities = nil,
}

M.config = vim.deepcopy(defaults)

-- API names moved between 0.7 and 0.11; these keep one code path.
local function clients(filter)
  if vim.lsp.get_clients then
    return vim.lsp.get_clients(filter)
  end
  if filter and filter.bufnr then
    return vim.tbl_values(vim.lsp.buf_get_clients(filter.bufnr))
  end
  return vim.lsp.get_active_clients()
end
M.clients = clients

-- 0.11 made client methods colon calls (client:request); older ones are plain fields.
local colon_methods = vim.fn.has('nvim-0.11') == 1
local function call(client, method, ...)
  if colon_methods then
    return client[method](client, ...)
  end
  return client[method](...)
end
M.call = call

local function settings_object()
  local s = vim.deepcopy(M.config.settings or {})
  -- JSON null for an unset output folder, as the server expects the key.
  if s.runOutputDir == nil or s.runOutputDir == '' then
    s.runOutputDir = vim.NIL
  end
  -- vim.json encodes an empty table as [], which is what the server expects here.
  s.allowedIncludePaths = s.allowedIncludePaths or {}
  return s
end

-- The nearest folder with a `.git` above the file, else the file's own folder.
function M.root_dir(fname)
  local dir = vim.fn.fnamemodify(fname, ':p:h')
  local git = vim.fn.finddir('.git', dir .. ';')
  if git == '' then
    git = vim.fn.findfile('.git', dir .. ';') -- worktrees and submodules have a .git file
  end
  if git ~= '' then
    return vim.fn.fnamemodify(git, ':p:h:h'):gsub('/$', '')
  end
  return dir
end

local function open_external(path)
  local opener
  if vim.fn.has('mac') == 1 then
    opener = { 'open', path }
  elseif vim.fn.has('win32') == 1 then
    opener = { 'cmd.exe', '/c', 'start', '', path }
  else
    opener = { 'xdg-open', path }
  end
  if vim.ui and vim.ui.open and vim.fn.has('nvim-0.10') == 1 then
    vim.ui.open(path)
    return true
  end
  if vim.fn.executable(opener[1]) == 1 then
    vim.fn.jobstart(opener, { detach = true })
    return true
  end
  vim.notify('rill: report written to ' .. path, vim.log.levels.INFO)
  return false
end

local last_report_shown = 0

-- window/showDocument: report.html opens in the browser; other files in a buffer.
local function show_document(err, result, ctx)
  if err or not result or not result.uri then
    return { success = false }
  end
  local uri = result.uri
  if uri:match('%.html?$') then
    last_report_shown = vim.loop.now()
    M.last_report = vim.uri_to_fname(uri)
    return { success = open_external(vim.uri_to_fname(uri)) }
  end
  if result.external then
    return { success = open_external(vim.uri_to_fname(uri)) }
  end
  local bufnr = vim.uri_to_bufnr(uri)
  vim.fn.bufload(bufnr)
  vim.api.nvim_win_set_buf(0, bufnr)
  if result.selection then
    local s = result.selection.start
    pcall(vim.api.nvim_win_set_cursor, 0, { s.line + 1, s.character })
  end
  return { success = true }
end

-- Where the server writes report.html: <runOutputDir>/<deck name>.out/
-- (a relative runOutputDir is taken from the root folder), else
-- <deck name>.out/ beside the deck.
local function expected_report(fname)
  local dir = vim.fn.fnamemodify(fname, ':p:h')
  local stem = vim.fn.fnamemodify(fname, ':t:r')
  local parent = dir
  local out = M.config.settings and M.config.settings.runOutputDir
  if type(out) == 'string' and out ~= '' then
    parent = out:match('^/') and out or (M.root_dir(fname) .. '/' .. out)
  end
  return parent .. '/' .. stem .. '.out/report.html'
end

local function rill_client(bufnr)
  for _, c in ipairs(clients({ bufnr = bufnr })) do
    if c.name == 'rill' then
      return c
    end
  end
  return nil
end

-- :RillRun: the server's `rill.run` with the document URI. The server
-- reports progress and sends showDocument for report.html; the fallback
-- below offers the report when the server did not.
function M.run(bufnr)
  bufnr = (bufnr == nil or bufnr == 0) and vim.api.nvim_get_current_buf() or bufnr
  local client = rill_client(bufnr)
  if not client then
    vim.notify('rill: the language server is not attached to this buffer', vim.log.levels.WARN)
    return
  end
  if vim.bo[bufnr].modified then
    vim.api.nvim_buf_call(bufnr, function()
      vim.cmd('silent write')
    end)
  end
  local fname = vim.api.nvim_buf_get_name(bufnr)
  local started = vim.loop.now()
  local params = { command = 'rill.run', arguments = { vim.uri_from_bufnr(bufnr) } }
  call(client, 'request', 'workspace/executeCommand', params, function(err, result)
    if err then
      vim.notify('rill: run failed: ' .. (err.message or vim.inspect(err)), vim.log.levels.ERROR)
      return
    end
    local report = expected_report(fname)
    if type(result) == 'table' and type(result.report) == 'string' then
      report = result.report:match('^file:') and vim.uri_to_fname(result.report) or result.report
    end
    -- Poll for the report (runs go on in the background), for up to 30 minutes.
    local timer = vim.loop.new_timer()
    local deadline = started + 30 * 60 * 1000
    timer:start(1000, 1000, vim.schedule_wrap(function()
      local stat = vim.loop.fs_stat(report)
      if last_report_shown >= started or vim.loop.now() > deadline then
        timer:stop()
        timer:close()
      elseif stat then
        timer:stop()
        timer:close()
        vim.notify('rill: run finished, report at ' .. report .. ' (:RillReport opens it)', vim.log.levels.INFO)
      end
    end))
  end, bufnr)
end

function M.open_report(bufnr)
  bufnr = (bufnr == nil or bufnr == 0) and vim.api.nvim_get_current_buf() or bufnr
  local report = expected_report(vim.api.nvim_buf_get_name(bufnr))
  if not vim.loop.fs_stat(report) then
    vim.notify('rill: no report yet at ' .. report .. '; :RillRun first', vim.log.levels.WARN)
    return
  end
  open_external(report)
end

local function on_attach(client, bufnr)
  vim.api.nvim_buf_create_user_command(bufnr, 'RillRun', function()
    M.run(bufnr)
  end, { desc = 'rill: run case' })
  vim.api.nvim_buf_create_user_command(bufnr, 'RillReport', function()
    M.open_report(bufnr)
  end, { desc = 'rill: open the last report' })
  local caps = client.server_capabilities or client.resolved_capabilities or {}
  if caps.codeLensProvider and vim.lsp.codelens then
    -- The "Run case" lens at the top of the file; run it with
    -- :lua vim.lsp.codelens.run()
    pcall(vim.lsp.codelens.refresh)
    vim.api.nvim_create_autocmd({ 'BufEnter', 'InsertLeave', 'BufWritePost' }, {
      buffer = bufnr,
      callback = function()
        pcall(vim.lsp.codelens.refresh)
      end,
    })
  end
  local hints = M.config.settings and M.config.settings.inlayHints
  if vim.lsp.inlay_hint and vim.lsp.inlay_hint.enable and caps.inlayHintProvider and (hints == nil or hints.enabled ~= false) then
    -- 0.10+: enable(true, { bufnr = n }); 0.10.0 took (bufnr, true).
    if not pcall(vim.lsp.inlay_hint.enable, true, { bufnr = bufnr }) then
      pcall(vim.lsp.inlay_hint.enable, bufnr, true)
    end
  end
  if M.config.on_attach then
    M.config.on_attach(client, bufnr)
  end
end

local function client_config(bufnr)
  local fname = vim.api.nvim_buf_get_name(bufnr)
  local capabilities = vim.lsp.protocol.make_client_capabilities()
  capabilities.window = capabilities.window or {}
  capabilities.window.showDocument = { support = true }
  if M.config.capabilities then
    capabilities = vim.tbl_deep_extend('force', capabilities, M.config.capabilities)
  end
  local root = M.root_dir(fname)
  return {
    name = 'rill',
    cmd = M.config.cmd,
    root_dir = root,
    workspace_folders = { { uri = vim.uri_from_fname(root), name = root } },
    -- initializationOptions is the `rill` object itself; settings (pushed in
    -- workspace/didChangeConfiguration and answered to workspace/configuration)
    -- carry it under the section `rill`.
    init_options = settings_object(),
    settings = { rill = settings_object() },
    capabilities = capabilities,
    handlers = { ['window/showDocument'] = show_document },
    on_attach = on_attach,
  }
end

-- Neovim 0.7 has no vim.lsp.start: one client per root, attached by hand.
local clients_by_root = {}
local function start_07(bufnr, config)
  local id = clients_by_root[config.root_dir]
  if id and vim.lsp.get_client_by_id(id) and not vim.lsp.client_is_stopped(id) then
    vim.lsp.buf_attach_client(bufnr, id)
    return id
  end
  id = vim.lsp.start_client(config)
  if id then
    clients_by_root[config.root_dir] = id
    vim.lsp.buf_attach_client(bufnr, id)
  end
  return id
end

function M.start(bufnr)
  bufnr = (bufnr == nil or bufnr == 0) and vim.api.nvim_get_current_buf() or bufnr
  if vim.api.nvim_buf_get_name(bufnr) == '' then
    return nil
  end
  if vim.fn.executable(M.config.cmd[1]) ~= 1 then
    vim.notify_once('rill: `' .. M.config.cmd[1] .. '` not found; install it (cargo install --path crates/rill-cli) or set cmd in require("rill").setup()', vim.log.levels.WARN)
    return nil
  end
  local config = client_config(bufnr)
  if vim.lsp.start then
    return vim.lsp.start(config, { bufnr = bufnr })
  end
  return start_07(bufnr, config)
end

-- Re-sends the settings, e.g. after changing require('rill').config.settings.
function M.notify_settings()
  for _, c in ipairs(clients()) do
    if c.name == 'rill' then
      c.config.settings = { rill = settings_object() }
      call(c, 'notify', 'workspace/didChangeConfiguration', { settings = c.config.settings })
    end
  end
end

function M.setup(opts)
  opts = opts or {}
  M.config = vim.tbl_deep_extend('force', vim.deepcopy(defaults), opts)
  if opts.settings and type(opts.settings.rill) == 'table' then
    -- Accept the settings wrapped in their section too.
    M.config.settings = vim.tbl_deep_extend('force', vim.deepcopy(defaults.settings), opts.settings.rill)
  end
  if opts.cmd then
    M.config.cmd = opts.cmd -- lists replace, never merge
  end
  if opts.settings and opts.settings.allowedIncludePaths then
    M.config.settings.allowedIncludePaths = opts.settings.allowedIncludePaths
  end
  local group = vim.api.nvim_create_augroup('rill_lsp', { clear = true })
  vim.api.nvim_create_autocmd('FileType', {
    group = group,
    pattern = 'rill',
    callback = function(args)
      M.start(args.buf)
    end,
  })
  -- Buffers already open when setup() runs.
  for _, b in ipairs(vim.api.nvim_list_bufs()) do
    if vim.api.nvim_buf_is_loaded(b) and vim.bo[b].filetype == 'rill' then
      M.start(b)
    end
  end
end

return M
