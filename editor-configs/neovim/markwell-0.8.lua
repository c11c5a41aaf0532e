-- markwell language server for Neovim 0.8 to 0.10 (vim.lsp.start), no plugins. Works on 0.11 too,
-- where markwell-0.11.lua is the shorter form. Put it in your config (for example
-- ~/.config/nvim/plugin/markwell.lua) or paste it into init.lua. Files named `*.chart.json` get
-- the filetype `chartspec` (decided by the file name, not by the `json` filetype) and
-- `markwell serve` starts for them, one server per root (the nearest folder holding
-- markwell.toml or .git; else the file's folder).

vim.filetype.add({
  pattern = { ['.*%.chart%.json'] = { 'chartspec', { priority = 10 } } },
})

local function find_root(path)
  local dir = vim.fn.fnamemodify(path, ':p:h')
  local config = vim.fn.findfile('markwell.toml', dir .. ';')
  if config ~= '' then return vim.fn.fnamemodify(config, ':p:h') end
  local git = vim.fn.finddir('.git', dir .. ';')
  if git ~= '' then return vim.fn.fnamemodify(git, ':p:h:h') end
  return dir
end

vim.api.nvim_create_autocmd('FileType', {
  pattern = 'chartspec',
  callback = function(args)
    vim.lsp.start({
      name = 'markwell',
      cmd = { 'markwell', 'serve' },        -- an absolute path to the binary works too
      root_dir = find_root(vim.api.nvim_buf_get_name(args.buf)),
      -- answered to the server's workspace/configuration request (section `markwell`)
      settings = {
        markwell = {
          -- rules = { ['sparse-column'] = 'off', ['unknown-key'] = 'warning' },
        },
      },
    }, { bufnr = args.buf })
  end,
})
