-- Headless end-to-end check of the Neovim set-up against a rill language
-- server: open a copy of examples/larkspur-east.rill with a deliberate unit
-- error, wait for its diagnostics, print them, ask for a hover on a key.
-- Run:  nvim --headless --clean -u editors/neovim/test/minimal_init.lua \
--         -c 'luafile editors/neovim/test/diagnostics.lua'
-- Exits 0 on success, 1 on failure. $RILL_EXPECT_CODE is the diagnostic
-- code to expect on the broken line (default unit.dimension).
local here = debug.getinfo(1, 'S').source:sub(2)
local repo = vim.fn.fnamemodify(here, ':p:h:h:h:h')
local timeout_ms = tonumber(os.getenv('RILL_NVIM_TIMEOUT_MS') or '') or 30000
local expect_code = os.getenv('RILL_EXPECT_CODE') or 'unit.dimension'

local function out(line)
  io.stdout:write(line .. '\n')
end

local function finish(ok, why)
  if not ok then
    out('neovim diagnostics check FAILED: ' .. why)
  else
    out('neovim diagnostics check passed')
  end
  local rill = require('rill')
  for _, c in ipairs(rill.clients()) do
    rill.call(c, 'stop', true)
  end
  vim.wait(2000, function()
    return #rill.clients() == 0
  end, 50)
  vim.cmd(ok and 'qall!' or 'cquit! 1')
end

local ok, err = pcall(function()
  local src = repo .. '/examples/larkspur-east.rill'
  local lines = vim.fn.readfile(src)
  local broken_line
  for i, l in ipairs(lines) do
    if l:match('^%s*kx = layers') then
      lines[i] = '  kx = 150 psi'
      broken_line = i
    end
  end
  assert(broken_line, 'examples/larkspur-east.rill has no `kx = layers` line to break')
  local dir = vim.fn.tempname()
  vim.fn.mkdir(dir, 'p')
  local deck = dir .. '/larkspur-east.rill'
  vim.fn.writefile(lines, deck)

  vim.cmd('edit ' .. vim.fn.fnameescape(deck))
  local buf = vim.api.nvim_get_current_buf()
  assert(vim.bo[buf].filetype == 'rill', 'filetype is ' .. vim.bo[buf].filetype .. ', expected rill')

  -- Attached and initialized, or gone (the server exited): stop waiting.
  local state = 'none'
  vim.wait(timeout_ms, function()
    local active = false
    for _, c in ipairs(require('rill').clients()) do
      if c.name == 'rill' then
        active = true
        if c.initialized and vim.lsp.buf_is_attached(buf, c.id) then
          state = 'ready'
          return true
        end
      end
    end
    if active then
      state = 'starting'
    elseif state == 'starting' then
      state = 'exited'
      return true
    end
    return false
  end, 50)
  assert(state == 'ready', 'the rill client is not ready within ' .. timeout_ms .. ' ms (state: ' .. state .. ')')

  local got = vim.wait(timeout_ms, function()
    return #vim.diagnostic.get(buf) > 0
  end, 100)
  assert(got, 'no diagnostics within ' .. timeout_ms .. ' ms')
  local diags = vim.diagnostic.get(buf)
  local found = false
  for _, d in ipairs(diags) do
    local code = d.code or (d.user_data and d.user_data.lsp and d.user_data.lsp.code) or '?'
    out(string.format('%s:%d:%d: %s [%s] %s', vim.fn.fnamemodify(deck, ':t'), d.lnum + 1, d.col + 1,
      vim.diagnostic.severity[d.severity] or tostring(d.severity), tostring(code), d.message))
    if tostring(code) == expect_code and d.lnum + 1 == broken_line then
      found = true
    end
  end
  assert(found, 'no ' .. expect_code .. ' diagnostic on line ' .. broken_line)

  -- Hover on the key `viscosity` in the fluid block.
  local row, col
  for i, l in ipairs(vim.api.nvim_buf_get_lines(buf, 0, -1, false)) do
    local c = l:find('viscosity', 1, true)
    if c then
      row, col = i - 1, c - 1
      break
    end
  end
  assert(row, 'no viscosity key in the deck')
  local params = { textDocument = { uri = vim.uri_from_bufnr(buf) }, position = { line = row, character = col + 2 } }
  local responses = vim.lsp.buf_request_sync(buf, 'textDocument/hover', params, timeout_ms)
  assert(responses, 'no hover response within ' .. timeout_ms .. ' ms')
  local text
  for _, r in pairs(responses) do
    assert(not r.err, 'hover error: ' .. vim.inspect(r.err))
    if r.result and r.result.contents then
      local md = vim.lsp.util.convert_input_to_markdown_lines(r.result.contents)
      text = table.concat(md, '\n')
    end
  end
  assert(text and text:match('%S'), 'empty hover on viscosity')
  out('hover on viscosity: ' .. text:gsub('\n', ' | '))

  -- With RILL_NVIM_RUN=1 (a server that can run this deck): :RillRun, then
  -- the server's window/showDocument for report.html.
  if os.getenv('RILL_NVIM_RUN') == '1' then
    vim.cmd('RillRun')
    local shown = vim.wait(timeout_ms, function()
      return require('rill').last_report ~= nil
    end, 100)
    assert(shown, 'no report.html shown within ' .. timeout_ms .. ' ms of :RillRun')
    out('report shown: ' .. require('rill').last_report)
  end
end)

finish(ok, tostring(err))
