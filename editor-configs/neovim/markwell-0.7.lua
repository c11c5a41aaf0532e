-- markwell language server for Neovim 0.7 (vim.lsp.start_client), no plugins needed. On 0.8 or
-- later use markwell-0.8.lua or, on 0.11+, markwell-0.11.lua.
-- Put this file in your config (e.g. ~/.config/nvim/lua/markwell.lua) and `require('markwell')`,
-- or paste it into init.lua. It gives `*.chart.json` files the filetype `chartspec` and starts
-- `markwell serve` for them, rooted at the nearest folder holding markwell.toml or .git.

vim.cmd([[autocmd BufRead,BufNewFile *.chart.json setfiletype chartspec]])

local function find_root(path)
  local dir = vim.fn.fnamemodify(path, ':p:h')
  local config = vim.fn.findfile('markwell.toml', dir .. ';')
  if config ~= '' then return vim.fn.fnamemodify(config, ':p:h') end
  local git = vim.fn.finddir('.git', dir .. ';')
  if git ~= '' then return vim.fn.fnamemodify(git, ':p:h:h') end
  return dir
end

local markwell_client_by_root = {}

vim.api.nvim_create_autocmd('FileType', {
  pattern = 'chartspec',
  callback = function(args)
    local root = find_root(vim.api.nvim_buf_get_name(args.buf))
    local client_id = markwell_client_by_root[root]
    if client_id == nil or vim.lsp.get_client_by_id(client_id) == nil then
      client_id = vim.lsp.start_client({
        name = 'markwell',
        cmd = { 'markwell', 'serve' },          -- an absolute path works too
        root_dir = root,
        workspace_folders = { { uri = vim.uri_from_fname(root), name = vim.fn.fnamemodify(root, ':t') } },
        get_language_id = function() return 'chartspec' end,
        -- answered to the server's workspace/configuration request (section `markwell`)
        settings = {
          markwell = {
            -- rules = { ['sparse-column'] = 'off', ['unknown-key'] = 'warning' },
            -- ranking = 'mackinlay-1986',
          },
        },
      })
      markwell_client_by_root[root] = client_id
    end
    if client_id then vim.lsp.buf_attach_client(args.buf, client_id) end
  end,
})
