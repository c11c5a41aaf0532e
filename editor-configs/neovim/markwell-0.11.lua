-- markwell language server for Neovim 0.11 or later (vim.lsp.config / vim.lsp.enable), no plugins.
-- Put it in your config (for example ~/.config/nvim/plugin/markwell.lua, which Neovim sources at
-- start-up) or paste it into init.lua. Files named `*.chart.json` get the filetype `chartspec`
-- (decided by the file name, not by the `json` filetype) and `markwell serve` starts for them,
-- rooted at the nearest folder holding markwell.toml or .git.

vim.filetype.add({
  pattern = { ['.*%.chart%.json'] = { 'chartspec', { priority = 10 } } },
})

vim.lsp.config('markwell', {
  cmd = { 'markwell', 'serve' },            -- an absolute path to the binary works too
  filetypes = { 'chartspec' },
  root_markers = { 'markwell.toml', '.git' },
  -- answered to the server's workspace/configuration request (section `markwell`)
  settings = {
    markwell = {
      -- rules = { ['sparse-column'] = 'off', ['unknown-key'] = 'warning' },
      -- ranking = 'mackinlay-1986',
    },
  },
})

vim.lsp.enable('markwell')
