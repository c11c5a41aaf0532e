"""Client A: pytest-lsp drives `markwell serve` over stdio (adapted from the project's
real-LSP-clients recipe; the cases in cases.json are chart specs of our own).

Env:
  LSP_SERVER_CMD   server command, shell-split (e.g. "/abs/target/debug/markwell serve");
                   default: target/debug/markwell serve of this repository
  LSP_CLIENT_CAPS  pytest-lsp bundled client profile whose capabilities we declare
                   ("visual-studio-code", "neovim@v0.7.0", "emacs", ...). pytest-lsp's
                   spec checks only run when declared capabilities are non-empty.
Cases (document text + expected diagnostic ranges) come from cases.json.
"""
import asyncio
import json
import os
import pathlib
import shlex

import pytest
import pytest_lsp
from lsprotocol import types
from pytest_lsp import ClientServerConfig, LanguageClient

HERE = pathlib.Path(__file__).resolve().parent
DEFAULT_CMD = f"{shlex.quote(str(HERE.parent.parent / 'target' / 'debug' / 'markwell'))} serve"
SERVER_CMD = shlex.split(os.environ.get("LSP_SERVER_CMD", DEFAULT_CMD))
CLIENT_CAPS = os.environ.get("LSP_CLIENT_CAPS", "visual-studio-code")
TIMEOUT_S = float(os.environ.get("LSP_TIMEOUT_MS", "10000")) / 1000  # pytest-lsp has no default timeout
CASES = json.loads((HERE / "cases.json").read_text(encoding="utf-8"))


@pytest_lsp.fixture(
    # NB: ClientServerConfig(server_env=...) REPLACES the whole environment of the server
    # (it is passed as env= to asyncio.create_subprocess_exec); leave it None to inherit.
    config=ClientServerConfig(server_command=SERVER_CMD),
)
async def client(lsp_client: LanguageClient, tmp_path_factory):
    root = tmp_path_factory.mktemp("ws")

    # the vscode profile declares dynamic registration of watched files, so the server asks for
    # it; pytest-lsp's client has no handler of its own for that request
    @lsp_client.feature(types.CLIENT_REGISTER_CAPABILITY)
    def register_capability(params: types.RegistrationParams):
        lsp_client.registrations = getattr(lsp_client, "registrations", []) + list(params.registrations)
        return None

    # profiles that declare workspace.inlayHint.refreshSupport (nvim 0.11) get this request when
    # a full data profile replaces a sample; pytest-lsp has no handler of its own for it
    @lsp_client.feature(types.WORKSPACE_INLAY_HINT_REFRESH)
    def inlay_hint_refresh(params):
        lsp_client.inlay_hint_refreshes = getattr(lsp_client, "inlay_hint_refreshes", 0) + 1
        return None

    params = types.InitializeParams(
        capabilities=pytest_lsp.client_capabilities(CLIENT_CAPS),
        root_uri=root.as_uri(),
        workspace_folders=[types.WorkspaceFolder(uri=root.as_uri(), name="ws")],
    )
    # pytest-lsp has no timeouts of its own: a server that never answers `initialize`
    # (or never exits after `exit`) hangs the run, and client.stop() only waits for the
    # process, it does not kill it. Bound both ends and kill on timeout.
    try:
        lsp_client.init_result = await asyncio.wait_for(lsp_client.initialize_session(params), TIMEOUT_S)
    except BaseException:
        kill_server(lsp_client)
        raise
    lsp_client.root = root
    yield
    try:  # shutdown request + exit notification, then waits for the process to end
        await asyncio.wait_for(lsp_client.shutdown_session(), TIMEOUT_S)
    except BaseException:
        kill_server(lsp_client)
        raise
    proc = lsp_client._server  # asyncio.subprocess.Process (pygls attribute, private)
    if lsp_client.error is None and proc is not None:
        assert proc.returncode == 0, f"server exit code after shutdown/exit: {proc.returncode}"


def kill_server(client: LanguageClient):
    proc = getattr(client, "_server", None)
    if proc is not None and proc.returncode is None:
        proc.kill()


def range_str(r: types.Range) -> str:
    return f"{r.start.line}:{r.start.character}-{r.end.line}:{r.end.character}"


def expected_ranges(case, encoding) -> list:
    """cases.json holds UTF-16 columns (the LSP default, and what Neovim 0.7 / Eglot 1.9
    use). If the server negotiated another positionEncoding with this client profile
    (e.g. utf-32 for "emacs", utf-8 for "neovim@v0.11.0"), convert them."""
    enc = getattr(encoding, "value", encoding) or "utf-16"
    lines = case["text"].split("\n")

    def conv(line_no: int, col16: int) -> int:
        line, units, i = lines[line_no], 0, 0
        while units < col16:
            units += 2 if ord(line[i]) > 0xFFFF else 1
            i += 1
        prefix = line[:i]
        return {"utf-8": len(prefix.encode("utf-8")), "utf-32": len(prefix)}.get(enc, col16)

    out = []
    for r in case["expect_ranges"]:
        (l0, c0), (l1, c1) = (map(int, p.split(":")) for p in r.split("-"))
        out.append(f"{l0}:{conv(l0, c0)}-{l1}:{conv(l1, c1)}")
    return sorted(out)


def pulls_diagnostics(client: LanguageClient) -> bool:
    """The server answers textDocument/diagnostic (it does for client profiles that declare
    textDocument.diagnostic, such as Neovim 0.11's) and then pushes nothing for open files."""
    return bool(client.init_result and client.init_result.capabilities.diagnostic_provider)


async def wait_publish(client: LanguageClient, uri: str):
    """The document's current diagnostics in client.diagnostics[uri]: pulled when the server
    answers pulls, else the next published set."""
    if pulls_diagnostics(client):
        report = await asyncio.wait_for(
            client.text_document_diagnostic_async(
                types.DocumentDiagnosticParams(text_document=types.TextDocumentIdentifier(uri=uri))
            ),
            TIMEOUT_S,
        )
        assert report.kind == "full", report
        client.diagnostics[uri] = list(report.items)
        return
    await asyncio.wait_for(client.wait_for_notification(types.TEXT_DOCUMENT_PUBLISH_DIAGNOSTICS), TIMEOUT_S)


async def open_doc(client: LanguageClient, name: str, text: str, language_id: str, wait=True):
    path = client.root / name
    path.write_text(text, encoding="utf-8")
    uri = path.as_uri()
    client.text_document_did_open(
        types.DidOpenTextDocumentParams(
            text_document=types.TextDocumentItem(uri=uri, language_id=language_id, version=1, text=text)
        )
    )
    # wait_for_notification registers its waiter synchronously and we have not yielded to
    # the event loop since sending didOpen, so the publish cannot slip past it.
    while wait and uri not in client.diagnostics:  # loop: a publish for another uri may come first
        await wait_publish(client, uri)
    return uri


def to_offset(text: str, position: types.Position, encoding) -> int:
    """Index into `text` (a Python str) of an LSP position in the negotiated encoding;
    lines split at \n, \r\n and \r (LSP 3.17 "Text Documents")."""
    enc = getattr(encoding, "value", encoding) or "utf-16"
    lines = text.splitlines(keepends=True)
    offset = sum(len(line) for line in lines[: position.line])
    line = lines[position.line] if position.line < len(lines) else ""
    units = 0
    for index, char in enumerate(line):
        if units >= position.character or char in "\r\n":
            return offset + index
        units += {"utf-8": len(char.encode("utf-8")), "utf-32": 1}.get(enc, 2 if ord(char) > 0xFFFF else 1)
    return offset + len(line.rstrip("\r\n"))


def apply_edits(text: str, edits, encoding) -> str:
    spans = sorted(
        ((to_offset(text, e.range.start, encoding), to_offset(text, e.range.end, encoding), e.new_text) for e in edits),
        reverse=True,
    )
    for start, end, new_text in spans:
        text = text[:start] + new_text + text[end:]
    return text


@pytest.mark.parametrize("case", CASES, ids=[c["name"] for c in CASES])
async def test_diagnostics_hover_codeaction(client: LanguageClient, case):
    caps = client.init_result.capabilities
    encoding = caps.position_encoding
    uri = await open_doc(client, case["file"], case["text"], case.get("language_id", "chartspec"))

    diags = client.diagnostics[uri]
    assert sorted(range_str(d.range) for d in diags) == expected_ranges(case, encoding)
    for d in diags:
        assert d.source == "markwell"
        assert isinstance(d.code, str) and d.code, d

    first = diags[0]
    hover = await asyncio.wait_for(
        client.text_document_hover_async(
            types.HoverParams(text_document=types.TextDocumentIdentifier(uri=uri), position=first.range.start)
        ),
        TIMEOUT_S,
    )
    assert hover is not None
    # pygls' converter is lenient (Hover(contents=42) deserialises fine): check the shape
    assert isinstance(hover.contents, types.MarkupContent), hover
    assert hover.contents.kind == types.MarkupKind.Markdown
    assert first.code in hover.contents.value

    text = case["text"]
    version = 1
    if case.get("fix_code"):
        target = next(d for d in diags if d.code == case["fix_code"])
        actions = await asyncio.wait_for(
            client.text_document_code_action_async(
                types.CodeActionParams(
                    text_document=types.TextDocumentIdentifier(uri=uri),
                    range=target.range,
                    context=types.CodeActionContext(diagnostics=[target]),
                )
            ),
            TIMEOUT_S,
        )
        assert actions, "expected at least one code action for the diagnostic"
        fix = actions[0]
        assert isinstance(fix, types.CodeAction), fix
        assert fix.kind == types.CodeActionKind.QuickFix
        assert fix.edit is not None and fix.edit.changes and uri in fix.edit.changes, fix.edit
        text = apply_edits(text, fix.edit.changes[uri], encoding)
        assert text == case["expect_after_apply"]
        # send the fixed text back: the diagnostic is gone
        version += 1
        client.text_document_did_change(
            types.DidChangeTextDocumentParams(
                text_document=types.VersionedTextDocumentIdentifier(uri=uri, version=version),
                content_changes=[types.TextDocumentContentChangeWholeDocument(text=text)],
            )
        )
        await wait_publish(client, uri)
        assert case["fix_code"] not in [d.code for d in client.diagnostics[uri]]

    if case.get("append_line"):
        before = len(client.diagnostics[uri])
        version += 1
        end_line = len(text.splitlines())
        client.text_document_did_change(
            types.DidChangeTextDocumentParams(
                text_document=types.VersionedTextDocumentIdentifier(uri=uri, version=version),
                # an incremental change at the end of the document (we asked for incremental sync)
                content_changes=[
                    types.TextDocumentContentChangePartial(
                        range=types.Range(
                            start=types.Position(line=end_line, character=0),
                            end=types.Position(line=end_line, character=0),
                        ),
                        text=case["append_line"] + "\n",
                    )
                ],
            )
        )
        await wait_publish(client, uri)
        assert len(client.diagnostics[uri]) > before


async def test_completion_respects_client_caps(client: LanguageClient):
    """pytest-lsp's built-in spec checks fire on completion results: e.g. a snippet item
    sent to a client profile without snippetSupport -> LspSpecificationWarning, an error
    here because pytest.ini has filterwarnings = error::pytest_lsp.LspSpecificationWarning."""
    assert client.init_result.capabilities.completion_provider
    text = '{\n  "mark": "",\n  "bind": {}\n}\n'
    uri = await open_doc(client, "complete.chart.json", text, "chartspec")
    result = await asyncio.wait_for(
        client.text_document_completion_async(
            types.CompletionParams(
                text_document=types.TextDocumentIdentifier(uri=uri),
                position=types.Position(line=1, character=11),  # between the quotes of "mark"
            )
        ),
        TIMEOUT_S,
    )
    items = result.items if isinstance(result, types.CompletionList) else result
    labels = {item.label for item in items}
    assert {"bar", "line", "point"} <= labels, labels


async def test_document_symbols_outline_layers_and_bindings(client: LanguageClient):
    text = CASES[0]["text"]
    uri = await open_doc(client, "outline.chart.json", text, "chartspec")
    symbols = await asyncio.wait_for(
        client.text_document_document_symbol_async(
            types.DocumentSymbolParams(text_document=types.TextDocumentIdentifier(uri=uri))
        ),
        TIMEOUT_S,
    )
    assert symbols and all(isinstance(s, types.DocumentSymbol) for s in symbols), symbols
    layer = next(s for s in symbols if s.detail == "bar")
    assert [child.name for child in layer.children] == ["x", "y"]


async def test_large_data_reports_work_done_progress(client: LanguageClient):
    """A data file far larger than the sampled head: the server publishes diagnostics from a
    sample first, then profiles the whole file in the background. When the declared client
    capabilities include window.workDoneProgress, a scan longer than 0.5 s is reported with
    $/progress; pytest-lsp checks that each token was created first (window/workDoneProgress/create)
    and that the client declared the capability."""
    rows = []
    size = 0
    index = 0
    while size < 24 * 1024 * 1024:
        row = f"2026-{index % 12 + 1:02},Harbour Loop {index % 5},{1000 + index % 997}\n"
        rows.append(row)
        size += len(row)
        index += 1
    (client.root / "crossings-big.csv").write_text("month,route,passengers\n" + "".join(rows), encoding="utf-8")
    text = '{\n  "source": { "path": "crossings-big.csv" },\n  "mark": "bar",\n  "bind": { "x": "route", "y": "passengers" }\n}\n'
    started = asyncio.get_running_loop().time()
    uri = await open_doc(client, "big.chart.json", text, "chartspec")
    first_diagnostics = asyncio.get_running_loop().time() - started
    supports = bool(client.init_result and getattr(
        pytest_lsp.client_capabilities(CLIENT_CAPS).window, "work_done_progress", False))
    # wait for the full profile: the hover on `passengers` counts every row
    position = types.Position(line=3, character=text.splitlines()[3].index('"passengers"') + 1)
    deadline = asyncio.get_running_loop().time() + 100
    while True:
        hover = await asyncio.wait_for(
            client.text_document_hover_async(
                types.HoverParams(text_document=types.TextDocumentIdentifier(uri=uri), position=position)
            ),
            TIMEOUT_S,
        )
        if hover and f"rows: {index}," in hover.contents.value:
            break
        assert asyncio.get_running_loop().time() < deadline, hover
        await asyncio.sleep(0.1)
    full_profile = asyncio.get_running_loop().time() - started
    print(f"first diagnostics {first_diagnostics:.2f}s, full profile {full_profile:.2f}s, progress tokens {len(client.progress_reports)}, supports {supports}")
    await asyncio.sleep(0.3)
    if supports and full_profile - first_diagnostics > 1.5:
        assert client.progress_reports, "a scan this long crossed the 0.5 s threshold"
    for token, reports in client.progress_reports.items():
        kinds = [report.kind for report in reports]
        assert kinds[0] == "begin" and kinds[-1] == "end", (token, kinds)
        percentages = [r.percentage for r in reports if getattr(r, "percentage", None) is not None]
        assert percentages == sorted(percentages) and all(0 <= p <= 100 for p in percentages)
    if not supports:
        assert not client.progress_reports
