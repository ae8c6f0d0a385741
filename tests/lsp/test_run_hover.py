"""Hover after a run: a cell's faces show the flux the run moved (after an
oil-water run, its water saturation too) and a well shows its rate, BHP and
cumulative, equal to the values in the result set on disk
(`last_state.json`, `last_state.f64`, `series.csv`); an edit that changes a
simulated value drops them."""

import asyncio
import csv
import json
import shutil
import struct
from pathlib import Path

from lsprotocol import types
from pytest_lsp import LanguageClient

from test_server import clean, open_deck, change, wait_for

STB_PER_DAY = 0.158987294928 / 86400.0  # m3/s of 1 stb/day
REPO = Path(__file__).resolve().parents[2]


async def run_deck(client: LanguageClient, uri: str):
    await client.workspace_execute_command_async(types.ExecuteCommandParams(command="rill.run", arguments=[uri]))

    async def finished():
        while not any("finished" in m.message or "failed" in m.message for m in client.messages):
            await asyncio.sleep(0.1)

    await asyncio.wait_for(finished(), 300)
    summary = next(m for m in client.messages if "finished" in m.message or "failed" in m.message)
    assert "finished" in summary.message, summary.message


async def hover(client: LanguageClient, uri: str, text: str, needle: str, plus: int) -> str:
    lines = text.split("\n")
    line = next(i for i, l in enumerate(lines) if needle in l)
    col = lines[line].index(needle) + plus
    h = await client.text_document_hover_async(
        types.HoverParams(text_document=types.TextDocumentIdentifier(uri=uri), position=types.Position(line=line, character=col))
    )
    assert h is not None
    return h.contents.value


async def open_and_run(client: LanguageClient, deck: Path):
    """Opens `deck`, waits for it to check clean and runs it; gives its
    text, URI, `last_state.json` and the arrays of `last_state.f64` by the
    names the header gives them, in order."""
    text = deck.read_text()
    uri = open_deck(client, deck, text)
    await wait_for(client, lambda: clean(client, uri), "a clean deck")
    await run_deck(client, uri)
    out = deck.with_suffix(".out")
    head = json.loads((out / "last_state.json").read_text())
    nx, ny, nz = head["grid"]
    n = nx * ny * nz
    order = head["arrays"]["order"]
    values = struct.unpack("<%dd" % (len(order) * n), (out / "last_state.f64").read_bytes())
    return text, uri, head, {name: values[k * n : (k + 1) * n] for k, name in enumerate(order)}


def run_section(md: str) -> str:
    assert "**last run**" in md, md
    return md[md.index("**last run**"):]


def flux_rows(md: str) -> dict:
    rows = {}
    for row in run_section(md).split("\n"):
        cells = [c.strip() for c in row.strip().strip("|").split("|")]
        if len(cells) == 3 and cells[0] in ("west", "east", "south", "north", "top", "bottom"):
            rows[cells[0]] = cells
    return rows


def shown(x: float) -> float:
    """A value as hover prints it: 6 significant digits."""
    return float(f"{x:.6g}")


async def test_hover_after_a_run_shows_the_runs_flux_and_well_rate_from_the_result_files(
    client: LanguageClient, workspace: Path
):
    deck = workspace / "block.rill"
    text, uri, head, arrays = await open_and_run(client, deck)
    assert list(arrays) == ["pressure", "flux_x", "flux_y", "flux_z"], list(arrays)
    nx = head["grid"][0]
    pressure, fx, fy = arrays["pressure"], arrays["flux_x"], arrays["flux_y"]

    # The producer's cell (6, 6, 1): the flux through each face, out of or
    # into the cell, as the result files hold it (field units: stb/day).
    md = await hover(client, uri, text, "location = (6, 6)", len("location = ") + 1)
    c = 5 + nx * 5
    expected = {
        "east": fx[c],
        "west": -fx[c - 1],
        "north": fy[c],
        "south": -fy[c - nx],
    }
    rows = flux_rows(md)
    assert set(rows) == set(expected), md
    for side, out_m3s in expected.items():
        _, value, direction = rows[side]
        assert float(value) == shown(abs(out_m3s) / STB_PER_DAY), (side, md)
        assert direction == ("out of the cell" if out_m3s > 0 else "into the cell"), (side, md)
    # Around a producer everything flows in.
    assert all(r[2] == "into the cell" for r in rows.values()), md
    assert f"pressure {shown(pressure[c] / 6894.757293168361):g} psi" in md, md

    # The well: its rate, BHP and cumulative, equal to series.csv's last row.
    with open(deck.with_suffix(".out") / "series.csv", newline="") as f:
        last = list(csv.DictReader(f))[-1]
    md = await hover(client, uri, text, 'well "MB-1"', 7)
    section = run_section(md)
    rate = float(last["MB-1 rate [stb/day]"])
    bhp = float(last["MB-1 bhp [psi]"])
    cum = float(last["MB-1 cumulative [stb]"])
    assert f"rate {shown(rate):g} stb/day" in section, section
    assert f"BHP {shown(bhp):g} psi" in section, section
    assert f"cumulative {shown(cum):g} stb" in section, section
    assert "t = 180 day" in section, section
    # The header holds the same rate, in SI.
    assert abs(head["wells"][0]["rate_m3_s"] / STB_PER_DAY - rate) <= 1e-9 * abs(rate)

    # A comment keeps the values; a new porosity makes them stale.
    change(client, uri, 2, [types.TextEdit(range=types.Range(start=types.Position(0, 0), end=types.Position(0, 0)), new_text="# note\n")])
    text2 = "# note\n" + text
    await wait_for(client, lambda: clean(client, uri), "the deck with a comment")
    md = await hover(client, uri, text2, 'well "MB-1"', 7)
    assert "**last run**" in md, md
    lines = text2.split("\n")
    line = next(i for i, l in enumerate(lines) if "porosity = 0.2" in l)
    col = lines[line].index("0.2")
    change(
        client,
        uri,
        3,
        [types.TextEdit(range=types.Range(start=types.Position(line, col), end=types.Position(line, col + 3)), new_text="0.25")],
    )
    text3 = text2.replace("porosity = 0.2", "porosity = 0.25", 1)
    await asyncio.sleep(0.5)
    await wait_for(client, lambda: clean(client, uri), "the edited deck")
    md = await hover(client, uri, text3, 'well "MB-1"', 7)
    assert "**last run**" not in md, md


async def test_hover_still_answers_after_the_run_files_are_announced_as_created(
    client: LanguageClient, workspace: Path
):
    """An editor announces every file a run writes into the workspace (the
    result set, its maps) as a watched-file change; hover must go on
    answering, with the run's values."""
    deck = workspace / "block.rill"
    text = deck.read_text()
    uri = open_deck(client, deck, text)
    await wait_for(client, lambda: clean(client, uri), "a clean deck")
    await run_deck(client, uri)
    out = workspace / "block.out"
    # Folders too: an editor announces the result folder and its maps folder.
    changes = [
        types.FileEvent(uri=p.as_uri(), type=types.FileChangeType.Created)
        for p in [out, *sorted(out.rglob("*"))]
    ]
    assert len(changes) > 5
    client.workspace_did_change_watched_files(types.DidChangeWatchedFilesParams(changes=changes))
    md = await asyncio.wait_for(hover(client, uri, text, "location = (6, 6)", len("location = ") + 1), 20)
    assert "last run" in md, md


async def test_hover_after_an_oil_water_run_shows_the_cells_saturation_from_the_result_files(
    client: LanguageClient, workspace: Path
):
    """The waterflood example, run from the editor: hover on the producer's
    cell gives the water saturation the run left there (the fifth array of
    `last_state.f64`, named in the header) beside its pressure."""
    deck = workspace / "flood.rill"
    shutil.copy(REPO / "examples" / "brackenlow-waterflood.rill", deck)
    text, uri, head, arrays = await open_and_run(client, deck)
    assert list(arrays) == ["pressure", "flux_x", "flux_y", "flux_z", "water_saturation"], list(arrays)
    nx = head["grid"][0]
    pressure, sw = arrays["pressure"], arrays["water_saturation"]

    # BW-1 at (23, 11), its first completed layer.
    md = await hover(client, uri, text, "location = (23, 11)", len("location = ") + 1)
    assert "(23, 11, 1)" in md, md
    c = 22 + nx * 10
    section = run_section(md)
    assert f"pressure {shown(pressure[c] / 6894.757293168361):g} psi" in section, section
    assert f"water saturation {shown(sw[c]):g} (krw " in section, section
    # The water has reached the producer by the end of the run.
    assert sw[c] > 0.3, sw[c]
