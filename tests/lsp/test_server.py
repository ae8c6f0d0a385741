"""End-to-end tests of `rill lsp`: the real binary over stdio."""

import asyncio
import json
import subprocess
from pathlib import Path

import pytest
from lsprotocol import types
from pytest_lsp import LanguageClient

from conftest import RILL

WAIT = 20.0


def offset(text: str, pos: types.Position) -> int:
    """Index into `text` of a UTF-16 protocol position (decks here use `\\n`)."""
    lines = text.split("\n")
    start = sum(len(line) + 1 for line in lines[: pos.line])
    if pos.line >= len(lines):
        return len(text)
    units = 0
    for i, ch in enumerate(lines[pos.line]):
        if units >= pos.character:
            return start + i
        units += 2 if ord(ch) > 0xFFFF else 1
    return start + len(lines[pos.line])


def apply(text: str, edits) -> str:
    spans = sorted(((offset(text, e.range.start), offset(text, e.range.end), e.new_text) for e in edits), reverse=True)
    for a, b, new in spans:
        text = text[:a] + new + text[b:]
    return text


async def wait_for(client: LanguageClient, check, what: str, timeout: float = WAIT):
    """Wait until `check()` is true, re-checking after each notification."""

    async def loop():
        while not check():
            await client.wait_for_notification("textDocument/publishDiagnostics")

    try:
        await asyncio.wait_for(loop(), timeout)
    except asyncio.TimeoutError:
        pytest.fail(f"timed out waiting for {what}: {client.diagnostics}")


def open_deck(client: LanguageClient, path: Path, text: str) -> str:
    uri = path.as_uri()
    client.text_document_did_open(
        types.DidOpenTextDocumentParams(
            text_document=types.TextDocumentItem(uri=uri, language_id="rill", version=1, text=text)
        )
    )
    return uri


def change(client: LanguageClient, uri: str, version: int, edits):
    client.text_document_did_change(
        types.DidChangeTextDocumentParams(
            text_document=types.VersionedTextDocumentIdentifier(uri=uri, version=version),
            content_changes=[
                types.TextDocumentContentChangePartial(range=e.range, text=e.new_text) for e in edits
            ],
        )
    )


def clean(client, uri):
    return uri in client.diagnostics and len(client.diagnostics[uri]) == 0


def codes(client, uri):
    return [d.code for d in client.diagnostics.get(uri, [])]


async def test_diagnostics_then_fixed(client: LanguageClient, workspace: Path):
    deck = workspace / "block.rill"
    text = deck.read_text().replace("kx = 50 md", "kx = 50 psi")
    uri = open_deck(client, deck, text)
    await wait_for(client, lambda: "unit.dimension" in codes(client, uri), "the unit diagnostic")
    d = next(d for d in client.diagnostics[uri] if d.code == "unit.dimension")
    line = text.split("\n").index("  kx = 50 psi")
    assert d.range.start == types.Position(line=line, character=10)
    assert d.range.end == types.Position(line=line, character=13)
    assert d.severity == types.DiagnosticSeverity.Error
    assert d.source == "rill"
    # Fix it: `psi` -> `md`.
    change(client, uri, 2, [types.TextEdit(range=d.range, new_text="md")])
    await wait_for(client, lambda: clean(client, uri), "empty diagnostics")


async def test_code_action_fixes_the_unit(client: LanguageClient, workspace: Path):
    deck = workspace / "block.rill"
    text = deck.read_text().replace("kx = 50 md", "kx = 50 psi")
    uri = open_deck(client, deck, text)
    await wait_for(client, lambda: "unit.dimension" in codes(client, uri), "the unit diagnostic")
    d = next(d for d in client.diagnostics[uri] if d.code == "unit.dimension")
    actions = await client.text_document_code_action_async(
        types.CodeActionParams(
            text_document=types.TextDocumentIdentifier(uri=uri),
            range=d.range,
            context=types.CodeActionContext(diagnostics=[d]),
        )
    )
    fixes = [a for a in actions if a.kind == types.CodeActionKind.QuickFix and "`md`" in a.title]
    assert fixes, [a.title for a in actions]
    edits = fixes[0].edit.changes[uri]
    fixed = apply(text, edits)
    assert "  kx = 50 md\n" in fixed
    change(client, uri, 2, edits)
    await wait_for(client, lambda: clean(client, uri), "empty diagnostics")


def inspect_json(deck: Path, cell: str) -> dict:
    out = subprocess.run(
        [str(RILL), "inspect", str(deck), "--cell", cell, "--format", "json"],
        check=True,
        capture_output=True,
        text=True,
    )
    return json.loads(out.stdout)


async def test_hover_on_a_cell_matches_inspect(client: LanguageClient, workspace: Path):
    deck = workspace / "block.rill"
    text = deck.read_text()
    uri = open_deck(client, deck, text)
    lines = text.split("\n")
    line = next(i for i, l in enumerate(lines) if "location = (6, 6)" in l)
    col = lines[line].index("(6, 6)") + 1
    hover = await client.text_document_hover_async(
        types.HoverParams(
            text_document=types.TextDocumentIdentifier(uri=uri),
            position=types.Position(line=line, character=col),
        )
    )
    assert hover is not None
    md = hover.contents.value
    assert "cell (6, 6, 1)" in md
    expected = inspect_json(deck, "6,6,1")
    rows = {}
    for row in md.split("\n"):
        cells = [c.strip() for c in row.strip().strip("|").split("|")]
        if len(cells) == 5 and cells[0] in ("west", "east", "south", "north", "top", "bottom"):
            rows[cells[0]] = cells
    assert len(rows) == 6, md
    for face in expected["faces"]:
        side, nb, k_face, t_field, t_si = rows[face["side"]]
        # The hover shows 6 significant digits.
        assert float(k_face) == pytest.approx(face["perm_face_md"], rel=1e-5, abs=1e-12)
        assert float(t_field) == pytest.approx(face["trans_stb_day_psi"], rel=1e-5, abs=1e-12)
        assert float(t_si) == pytest.approx(face["trans_si"], rel=1e-4, abs=1e-30)
        if face["neighbor"]:
            assert nb == "({}, {}, {})".format(*face["neighbor"])


def utf16_len(s: str) -> int:
    return sum(2 if ord(ch) > 0xFFFF else 1 for ch in s)


def face_rows(md: str) -> dict:
    rows = {}
    for row in md.split("\n"):
        cells = [c.strip() for c in row.strip().strip("|").split("|")]
        if len(cells) == 5 and cells[0] in ("west", "east", "south", "north", "top", "bottom"):
            rows[cells[0]] = cells
    return rows


async def test_hover_on_a_layered_anisotropic_deck_after_multibyte_text(client: LanguageClient, workspace: Path):
    """Non-uniform column widths, kz = 0.1 kx, and a sealing streak (kz = 0 md
    in layer 2 under the well): the hover's face table equals `rill inspect`,
    at a position right after a line whose well name holds Ω and an emoji."""
    source = (Path(__file__).resolve().parents[2] / "examples" / "larkspur-east.rill").read_text()
    old = 'well "LE-1" {\n  role = producer\n  location = (15, 10)\n'
    assert old in source
    # Column 8 lies between a 60 ft and a 50 ft column; the streak is widened to reach it.
    text = source.replace(old, 'well "LE-Ω😀" {\n  location = (8, 10)\n  role = producer\n')
    text = text.replace('well "LE-1"', 'well "LE-Ω😀"').replace("patch i = 10..22 k = 2", "patch i = 7..22 k = 2")
    assert "patch i = 7..22 k = 2" in text
    deck = workspace / "lobe.rill"
    deck.write_text(text, encoding="utf-8")
    uri = open_deck(client, deck, text)
    await wait_for(client, lambda: clean(client, uri), "a clean deck")
    lines = text.split("\n")
    line = next(i for i, l in enumerate(lines) if "location = (8, 10)" in l)
    assert "Ω😀" in lines[line - 1]
    col = utf16_len(lines[line][: lines[line].index("(8, 10)") + 1])
    hover = await client.text_document_hover_async(
        types.HoverParams(text_document=types.TextDocumentIdentifier(uri=uri), position=types.Position(line=line, character=col))
    )
    assert hover is not None
    md = hover.contents.value
    assert "cell (8, 10, 1)" in md, md
    rows = face_rows(md)
    assert len(rows) == 6, md
    expected = inspect_json(deck, "8,10,1")
    for face in expected["faces"]:
        _, nb, k_face, t_field, t_si = rows[face["side"]]
        assert float(k_face) == pytest.approx(face["perm_face_md"], rel=1e-5, abs=1e-12)
        assert float(t_field) == pytest.approx(face["trans_stb_day_psi"], rel=1e-5, abs=1e-12)
        assert float(t_si) == pytest.approx(face["trans_si"], rel=1e-4, abs=1e-30)
    bottom = next(f for f in expected["faces"] if f["side"] == "bottom")
    assert bottom["perm_face_md"] == 0.0 and bottom["trans_si"] == 0.0  # the sealing streak
    east = next(f for f in expected["faces"] if f["side"] == "east")
    west = next(f for f in expected["faces"] if f["side"] == "west")
    assert east["trans_si"] != west["trans_si"]  # unequal column widths


async def test_completion_offers_units_after_a_number(client: LanguageClient, workspace: Path):
    deck = workspace / "block.rill"
    text = deck.read_text()
    uri = open_deck(client, deck, text)
    lines = text.split("\n")
    line = next(i for i, l in enumerate(lines) if l == "  kx = 50 md")
    items = await client.text_document_completion_async(
        types.CompletionParams(
            text_document=types.TextDocumentIdentifier(uri=uri),
            position=types.Position(line=line, character=len("  kx = 50 m")),
        )
    )
    labels = [i.label for i in (items.items if hasattr(items, "items") else items)]
    assert "md" in labels, labels


async def test_completion_offers_array_files_from_the_workspace(client: LanguageClient, workspace: Path):
    (workspace / "arrays").mkdir(exist_ok=True)
    (workspace / "arrays" / "kx-east.txt").write_text("50\n")
    deck = workspace / "block.rill"
    text = deck.read_text().replace("  kx = 50 md", '  kx = file "arrays/"', 1)
    uri = open_deck(client, deck, text)
    lines = text.split("\n")
    line = next(i for i, l in enumerate(lines) if l.startswith('  kx = file "arrays/'))
    items = await client.text_document_completion_async(
        types.CompletionParams(
            text_document=types.TextDocumentIdentifier(uri=uri),
            position=types.Position(line=line, character=len('  kx = file "arrays/')),
        )
    )
    items = items.items if hasattr(items, "items") else items
    assert [i.label for i in items] == ["kx-east.txt"], [i.label for i in items]
    assert items[0].kind == types.CompletionItemKind.File


async def test_formatting_gives_the_canonical_layout(client: LanguageClient, workspace: Path):
    deck = workspace / "block.rill"
    messy = deck.read_text().replace("  porosity = 0.2\n", "      porosity   =   0.2\n")
    uri = open_deck(client, deck, messy)
    edits = await client.text_document_formatting_async(
        types.DocumentFormattingParams(
            text_document=types.TextDocumentIdentifier(uri=uri),
            options=types.FormattingOptions(tab_size=2, insert_spaces=True),
        )
    )
    assert edits
    formatted = apply(messy, edits)
    # The command line formatter on a copy gives the same text.
    copy = workspace / "copy.rill"
    copy.write_text(messy)
    subprocess.run([str(RILL), "fmt", str(copy)], check=True, capture_output=True)
    assert formatted == copy.read_text()
    assert "\n  porosity = 0.2\n" in formatted


async def test_run_reports_progress_and_a_summary(client: LanguageClient, workspace: Path):
    deck = workspace / "block.rill"
    uri = open_deck(client, deck, deck.read_text())
    await wait_for(client, lambda: clean(client, uri), "a clean deck")
    await client.workspace_execute_command_async(
        types.ExecuteCommandParams(command="rill.run", arguments=[uri])
    )

    async def finished():
        while not any("finished" in m.message or "failed" in m.message for m in client.messages):
            await asyncio.sleep(0.1)

    await asyncio.wait_for(finished(), 300)
    summary = next(m for m in client.messages if "finished" in m.message or "failed" in m.message)
    assert "finished" in summary.message, summary.message
    assert "steps" in summary.message
    assert "MB-1 rate" in summary.message
    assert "licensed engineers" in summary.message
    assert (workspace / "block.out" / "report.html").is_file()
    # Work-done progress: begin, reports with rising percentages, end.
    reports = [r for rs in client.progress_reports.values() for r in rs]
    kinds = [r.kind for r in reports]
    assert kinds[0] == "begin" and kinds[-1] == "end", kinds
    pct = [r.percentage for r in reports if r.kind == "report" and r.percentage is not None]
    assert pct == sorted(pct)
    assert any(d.uri.endswith("block.out/report.html") and d.external for d in client.shown_documents)


def frame(obj) -> bytes:
    body = json.dumps(obj).encode()
    return b"Content-Length: %d\r\n\r\n" % len(body) + body


def run_session(messages, workspace: Path) -> int:
    """Send `messages` after initialize and return the exit code; stdin stays open."""
    p = subprocess.Popen([str(RILL), "lsp"], stdin=subprocess.PIPE, stdout=subprocess.PIPE)
    init = {"jsonrpc": "2.0", "id": 1, "method": "initialize",
            "params": {"processId": None, "rootUri": workspace.as_uri(), "capabilities": {}}}
    p.stdin.write(frame(init) + frame({"jsonrpc": "2.0", "method": "initialized", "params": {}}))
    for m in messages:
        p.stdin.write(frame(m))
    p.stdin.flush()
    try:
        return p.wait(timeout=10)
    finally:
        if p.poll() is None:
            p.kill()


def test_shutdown_then_exit_gives_0(workspace: Path):
    code = run_session([{"jsonrpc": "2.0", "id": 2, "method": "shutdown"},
                        {"jsonrpc": "2.0", "method": "exit"}], workspace)
    assert code == 0


def test_exit_without_shutdown_gives_1(workspace: Path):
    assert run_session([{"jsonrpc": "2.0", "method": "exit"}], workspace) == 1
