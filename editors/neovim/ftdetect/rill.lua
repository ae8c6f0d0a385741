-- *.rill files are rill cases. The autocmd works on every Neovim; on 0.8+
-- vim.filetype.add registers the extension with the Lua detector as well.
if vim.filetype and vim.filetype.add and vim.fn.has('nvim-0.8') == 1 then
  vim.filetype.add({ extension = { rill = 'rill' } })
end
vim.cmd([[autocmd BufRead,BufNewFile *.rill setfiletype rill]])
