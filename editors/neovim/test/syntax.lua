-- Checks syntax/rill.vim against the grammar fixtures of the VS Code
-- extension (editors/vscode/test/grammar/*.rill), reading their
-- `# ^^^ scope` assertions and mapping each TextMate scope to our Vim groups.
-- Run: nvim --headless --clean -u editors/neovim/test/minimal_init.lua -c 'luafile editors/neovim/test/syntax.lua'
local here = debug.getinfo(1, 'S').source:sub(2)
local editors = vim.fn.fnamemodify(here, ':p:h:h:h')

-- Scopes with no Vim counterpart (punctuation, meta.*) are not checked.
local groups_for = {
  ['comment.line.number-sign.rill'] = { 'rillComment' },
  ['string.quoted.double.rill'] = { 'rillString', 'rillFileString' },
  ['constant.character.escape.rill'] = { 'rillEscape' },
  ['invalid.illegal.escape.rill'] = { 'rillBadEscape' },
  ['constant.numeric.rill'] = { 'rillNumber', 'rillRange', 'rillSize' },
  ['keyword.other.unit.rill'] = { 'rillUnit' },
  ['storage.type.block.rill'] = { 'rillBlock' },
  ['variable.other.key.rill'] = { 'rillKey' },
  ['constant.language.rill'] = { 'rillEnum', 'rillFile' },
  ['keyword.operator.range.rill'] = { 'rillRangeOp' },
  ['keyword.operator.size.rill'] = { 'rillSizeOp' },
  ['keyword.operator.arithmetic.rill'] = { 'rillOperator' },
  ['keyword.other.datum.rill'] = { 'rillDatum' },
  ['variable.other.property.rill'] = { 'rillIdentifier' },
}

local function out(line)
  io.stdout:write(line .. '\n')
end

local checked, failures = 0, {}

local function stack_at(lnum, col)
  local names = {}
  for _, id in ipairs(vim.fn.synstack(lnum, col)) do
    names[vim.fn.synIDattr(id, 'name')] = true
  end
  return names
end

local function check_file(path)
  vim.cmd('edit! ' .. vim.fn.fnameescape(path))
  -- ftdetect/rill.lua and ftplugin/rill.lua at work:
  if vim.bo.filetype ~= 'rill' then
    table.insert(failures, path .. ': filetype is "' .. vim.bo.filetype .. '", expected rill')
    vim.bo.filetype = 'rill'
  end
  if vim.bo.commentstring ~= '# %s' then
    table.insert(failures, path .. ': commentstring is "' .. vim.bo.commentstring .. '"')
  end
  local lines = vim.api.nvim_buf_get_lines(0, 0, -1, false)
  local source_lnum
  for i, line in ipairs(lines) do
    local lead, marks, rest = line:match('^(#%s*)(%^+)%s+(.*)$')
    local first
    if marks then
      first = #lead -- 0-based column of the first ^
    else
      marks, rest = line:match('^#%s*<(%-+)%s+(.*)$')
      first = 0
    end
    if marks and source_lnum then
      local positive, negative = rest, ''
      local cut = rest:find(' %- ') or (rest:sub(1, 2) == '- ' and 0 or nil)
      if cut then
        positive, negative = rest:sub(1, cut), rest:sub(cut + 3)
      end
      local function wanted(list)
        local found
        for scope in list:gmatch('%S+') do
          if groups_for[scope] then
            found = scope -- the most specific mapped scope: the last one
          end
        end
        return found
      end
      local want, reject = wanted(positive), wanted(negative)
      for col = first, first + #marks - 1 do
        local names = stack_at(source_lnum, col + 1)
        local where = string.format('%s:%d:%d', vim.fn.fnamemodify(path, ':t'), source_lnum, col + 1)
        if want then
          checked = checked + 1
          local ok = false
          for _, g in ipairs(groups_for[want]) do
            ok = ok or names[g] == true
          end
          if not ok then
            table.insert(failures, where .. ': expected ' .. want .. ', got ' .. table.concat(vim.tbl_keys(names), ','))
          end
        end
        if reject then
          checked = checked + 1
          for _, g in ipairs(groups_for[reject]) do
            if names[g] then
              table.insert(failures, where .. ': unexpected ' .. g)
            end
          end
        end
      end
    elseif not line:match('^# SYNTAX TEST') then
      source_lnum = i
    end
  end
end

local ok, err = pcall(function()
  local files = vim.fn.glob(editors .. '/vscode/test/grammar/*.rill', false, true)
  assert(#files > 0, 'no grammar fixtures under editors/vscode/test/grammar')
  for _, f in ipairs(files) do
    check_file(f)
  end
end)
if not ok then
  table.insert(failures, tostring(err))
end
for _, f in ipairs(failures) do
  out('  ' .. f)
end
out(string.format('neovim syntax check: %d positions checked, %d failures', checked, #failures))
vim.cmd(#failures == 0 and checked > 0 and 'qall!' or 'cquit! 1')
