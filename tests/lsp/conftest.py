"""Fixtures for driving the real `rill lsp` binary over stdio with pytest-lsp."""

import os
import shutil
import sys
from pathlib import Path

import pytest
import pytest_lsp
from lsprotocol import types
from pytest_lsp import ClientServerConfig, LanguageClient, client_capabilities

REPO = Path(__file__).resolve().parents[2]
RILL = Path(os.environ.get("RILL_BIN", REPO / "target" / "debug" / "rill"))
EXAMPLE = REPO / "examples" / "teaching-block.rill"


@pytest.fixture
def workspace(tmp_path: Path) -> Path:
    """A workspace folder holding a copy of the teaching-block example."""
    shutil.copy(EXAMPLE, tmp_path / "block.rill")
    return tmp_path


@pytest_lsp.fixture(config=ClientServerConfig(server_command=[str(RILL), "lsp"]))
async def client(lsp_client: LanguageClient, workspace: Path):
    @lsp_client.feature(types.CLIENT_REGISTER_CAPABILITY)
    def _register(params):  # The server watches files through the client.
        return None

    caps = client_capabilities("visual-studio-code")
    root = workspace.as_uri()
    await lsp_client.initialize_session(
        types.InitializeParams(
            capabilities=caps,
            root_uri=root,
            workspace_folders=[types.WorkspaceFolder(uri=root, name="w")],
        )
    )
    yield
    await lsp_client.shutdown_session()


def pytest_sessionstart(session):
    if not RILL.exists():
        sys.exit(f"{RILL} is missing: build it with `cargo build -p rill-cli`")
