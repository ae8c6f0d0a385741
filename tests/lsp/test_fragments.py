"""A fragment (a file of well blocks that a deck includes) opened alone in
`rill lsp`: analysed through the deck that includes it."""

import shutil
from pathlib import Path

import pytest
from lsprotocol import types
from pytest_lsp import LanguageClient

from conftest import REPO
from test_server import open_deck, wait_for

TAMSIN = REPO / "examples" / "tamsin-ridge"
EVENT = '  report_every = 60 day\n  at 180 day {\n    well "TR-2" { control = bhp 170 bar }\n  }\n'


@pytest.fixture
def workspace(tmp_path: Path) -> Path:
    """The Tamsin Ridge example, its main deck with an event naming TR-2."""
    folder = tmp_path / "tamsin-ridge"
    shutil.copytree(TAMSIN, folder)
    main = folder / "tamsin-ridge.rill"
    main.write_text(main.read_text().replace("  report_every = 60 day\n", EVENT))
    return tmp_path


def position_of(text: str, needle: str, plus: int = 0) -> types.Position:
    at = text.index(needle) + plus
    line = text.count("\n", 0, at)
    return types.Position(line=line, character=at - (text.rfind("\n", 0, at) + 1))


async def test_a_fragment_alone_is_clean_and_hovers_with_its_well_index(client: LanguageClient, workspace: Path):
    wells = workspace / "tamsin-ridge" / "wells.rill"
    text = wells.read_text()
    uri = open_deck(client, wells, text)
    await wait_for(client, lambda: uri in client.diagnostics, "the fragment's diagnostics")
    assert len(client.diagnostics[uri]) == 0, client.diagnostics[uri]
    hover = await client.text_document_hover_async(
        types.HoverParams(
            text_document=types.TextDocumentIdentifier(uri=uri),
            position=position_of(text, '"TR-2"', 2),
        )
    )
    assert hover is not None
    md = hover.contents.value
    assert "well index [" in md, md
    # One row per completed layer of TR-2 (layers 1..2).
    assert sum(1 for row in md.split("\n") if row.startswith("| (3, 4,")) == 2, md


async def test_a_lone_fragment_gets_one_diagnostic(client: LanguageClient, workspace: Path):
    lone = workspace / "lone.rill"
    lone.write_text('well "L-1" {\n  role = producer\n  location = (1, 1)\n  radius = 0.1 m\n  control = bhp 100 bar\n}\n')
    uri = open_deck(client, lone, lone.read_text())
    await wait_for(client, lambda: uri in client.diagnostics, "the lone fragment's diagnostics")
    diags = client.diagnostics[uri]
    assert len(diags) == 1, diags
    assert diags[0].code == "deck.missing-key"
    assert "no deck in the workspace includes it" in diags[0].message
    assert (diags[0].range.start.line, diags[0].range.start.character) == (0, 0)


async def test_an_includer_written_later_is_found_through_watched_files(client: LanguageClient, workspace: Path):
    folder = workspace / "tamsin-ridge"
    lone = folder / "more-wells.rill"
    lone.write_text('well "TR-9" {\n  role = producer\n  location = (6, 6)\n  radius = 0.1 m\n  control = bhp 190 bar\n}\n')
    uri = open_deck(client, lone, lone.read_text())
    await wait_for(client, lambda: len(client.diagnostics.get(uri, [])) == 1, "one diagnostic")
    main = folder / "tamsin-ridge.rill"
    main.write_text(main.read_text().replace('include "wells.rill"\n', 'include "wells.rill"\ninclude "more-wells.rill"\n'))
    client.workspace_did_change_watched_files(
        types.DidChangeWatchedFilesParams(
            changes=[types.FileEvent(uri=main.as_uri(), type=types.FileChangeType.Changed)]
        )
    )
    await wait_for(client, lambda: uri in client.diagnostics and len(client.diagnostics[uri]) == 0, "the fragment checked through its deck")


async def test_rename_from_a_fragment_changes_the_deck_and_the_fragment(client: LanguageClient, workspace: Path):
    folder = workspace / "tamsin-ridge"
    wells, main = folder / "wells.rill", folder / "tamsin-ridge.rill"
    text = wells.read_text()
    uri = open_deck(client, wells, text)
    await wait_for(client, lambda: uri in client.diagnostics, "the fragment's diagnostics")
    at = position_of(text, '"TR-2"', 3)
    ident = types.TextDocumentIdentifier(uri=uri)
    prepared = await client.text_document_prepare_rename_async(
        types.PrepareRenameParams(text_document=ident, position=at)
    )
    assert prepared is not None and prepared.placeholder == "TR-2"
    refs = await client.text_document_references_async(
        types.ReferenceParams(
            text_document=ident, position=at, context=types.ReferenceContext(include_declaration=True)
        )
    )
    assert sorted(r.uri for r in refs) == sorted([main.as_uri(), uri])
    edit = await client.text_document_rename_async(
        types.RenameParams(text_document=ident, position=at, new_name="TR-2A")
    )
    assert edit is not None and edit.changes is not None
    assert set(edit.changes) == {main.as_uri(), uri}
    from test_server import apply

    new_main = apply(main.read_text(), edit.changes[main.as_uri()])
    new_wells = apply(text, edit.changes[uri])
    assert 'well "TR-2A" { control = bhp 170 bar }' in new_main
    assert new_wells.startswith('# Producers of the Tamsin Ridge north block.\nwell "TR-2A" {\n')
    assert '"TR-2"' not in new_main + new_wells
