-- Buffer settings for rill cases: `#` comments, two-space blocks.
if vim.b.did_ftplugin then
  return
end
vim.b.did_ftplugin = 1
vim.bo.commentstring = '# %s'
vim.bo.comments = ':#'
vim.bo.shiftwidth = 2
vim.bo.softtabstop = 2
vim.bo.expandtab = true
vim.b.undo_ftplugin = 'setlocal commentstring< comments< shiftwidth< softtabstop< expandtab<'
