-- Probe run after a shipped Neovim set-up from editor-configs/ was loaded, unchanged, as the
-- user's init file (nvim -u editor-configs/neovim/markwell-0.11.lua FILE -c 'luafile THIS').
-- It only watches: the set-up itself must give the buffer its filetype and start the server.
-- Writes one JSON object to $LSP_OUT: the filetype, the client's name, the diagnostics of the
-- buffer (code, message, 0-based range) and the text of a hover at $LSP_HOVER_AT ("line:col").
-- Exit code: 0 written, 2 the probe itself errored.

local out_path = assert(os.getenv('LSP_OUT'), 'LSP_OUT not set')
local timeout = tonumber(os.getenv('LSP_TIMEOUT_MS') or '10000')

local function clients(bufnr)
  if vim.lsp.get_clients then return vim.lsp.get_clients({ bufnr = bufnr }) end
  if vim.lsp.get_active_clients then return vim.lsp.get_active_clients({ bufnr = bufnr }) end
  return vim.lsp.buf_get_clients(bufnr)
end

local function main()
  local bufnr = vim.api.nvim_get_current_buf()
  local v = vim.version()
  local result = {
    filetype = vim.bo[bufnr].filetype,
    version = string.format('%d.%d.%d', v.major, v.minor, v.patch),
  }
  vim.wait(timeout, function() return #clients(bufnr) > 0 end, 50)
  local attached = clients(bufnr)
  result.clients = {}
  for _, client in pairs(attached) do table.insert(result.clients, client.name) end
  vim.wait(timeout, function() return #vim.diagnostic.get(bufnr) > 0 end, 50)
  result.diagnostics = {}
  for _, d in ipairs(vim.diagnostic.get(bufnr)) do
    table.insert(result.diagnostics, {
      code = d.code, message = d.message, source = d.source,
      range = { d.lnum, d.col, d.end_lnum, d.end_col },
    })
  end
  local hover_at = os.getenv('LSP_HOVER_AT')
  if hover_at and #attached > 0 then
    local line, col = hover_at:match('^(%d+):(%d+)$')
    local params = {
      textDocument = { uri = vim.uri_from_bufnr(bufnr) },
      position = { line = tonumber(line), character = tonumber(col) },
    }
    local responses = vim.lsp.buf_request_sync(bufnr, 'textDocument/hover', params, timeout) or {}
    for _, response in pairs(responses) do
      local contents = response.result and response.result.contents
      if type(contents) == 'table' then result.hover = contents.value or vim.json.encode(contents) end
    end
  end
  local out = assert(io.open(out_path, 'w'))
  out:write(vim.json.encode(result), '\n')
  out:close()
end

local ok, err = pcall(main)
if not ok then
  io.stderr:write('[shipped-nvim-probe] ', tostring(err), '\n')
  vim.cmd('cquit 2')
end
vim.cmd('qall!')
