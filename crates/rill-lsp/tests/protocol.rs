//! The server driven through the real protocol path: `rill_lsp::serve` on
//! in-process pipes, with a small JSON-RPC client written here.

use serde_json::{json, Value};
use std::collections::VecDeque;
use std::time::Duration;
use tokio::io::{AsyncReadExt, AsyncWriteExt, DuplexStream, ReadHalf, WriteHalf};
use tokio::task::JoinHandle;

struct Client {
    write: WriteHalf<DuplexStream>,
    read: ReadHalf<DuplexStream>,
    buf: Vec<u8>,
    /// Notifications seen while waiting for something else.
    pending: VecDeque<Value>,
    /// Requests the server sent to the client.
    server_requests: Vec<Value>,
    next_id: i64,
    server: Option<JoinHandle<u8>>,
}

const WAIT: Duration = Duration::from_secs(20);

impl Client {
    fn start() -> Client {
        let (client_side, server_side) = tokio::io::duplex(1 << 20);
        let (server_read, server_write) = tokio::io::split(server_side);
        let server = tokio::spawn(rill_lsp::serve(server_read, server_write));
        let (read, write) = tokio::io::split(client_side);
        Client {
            write,
            read,
            buf: Vec::new(),
            pending: VecDeque::new(),
            server_requests: Vec::new(),
            next_id: 1,
            server: Some(server),
        }
    }

    async fn send(&mut self, msg: Value) {
        let body = serde_json::to_vec(&msg).unwrap();
        let head = format!("Content-Length: {}\r\n\r\n", body.len());
        self.write.write_all(head.as_bytes()).await.unwrap();
        self.write.write_all(&body).await.unwrap();
        self.write.flush().await.unwrap();
    }

    async fn notify(&mut self, method: &str, params: Value) {
        self.send(message(None, method, params)).await;
    }

    /// The next message from the server; requests from the server are
    /// answered here (`null`, or `[null]` for configuration).
    async fn next_message(&mut self) -> Value {
        loop {
            if let Some(msg) = self.take_frame() {
                if msg.get("method").is_some() && msg.get("id").is_some() {
                    let result = if msg["method"] == "workspace/configuration" {
                        json!([null])
                    } else {
                        Value::Null
                    };
                    let id = msg["id"].clone();
                    self.server_requests.push(msg.clone());
                    self.send(json!({"jsonrpc": "2.0", "id": id, "result": result}))
                        .await;
                    continue;
                }
                return msg;
            }
            let mut chunk = [0u8; 65536];
            let n = tokio::time::timeout(WAIT, self.read.read(&mut chunk))
                .await
                .expect("the server answers in time")
                .unwrap();
            assert!(n > 0, "the server closed its output");
            self.buf.extend_from_slice(&chunk[..n]);
        }
    }

    fn take_frame(&mut self) -> Option<Value> {
        let text = &self.buf;
        let end = text.windows(4).position(|w| w == b"\r\n\r\n")?;
        let head = std::str::from_utf8(&text[..end]).unwrap();
        let len: usize = head
            .lines()
            .find_map(|l| l.strip_prefix("Content-Length: "))
            .unwrap()
            .trim()
            .parse()
            .unwrap();
        if text.len() < end + 4 + len {
            return None;
        }
        let body: Value = serde_json::from_slice(&text[end + 4..end + 4 + len]).unwrap();
        self.buf.drain(..end + 4 + len);
        Some(body)
    }

    async fn request(&mut self, method: &str, params: Value) -> Value {
        let id = self.next_id;
        self.next_id += 1;
        self.send(message(Some(id), method, params)).await;
        loop {
            let msg = self.next_message().await;
            if msg.get("id") == Some(&json!(id)) {
                assert!(msg.get("error").is_none(), "{method} failed: {msg}");
                return msg["result"].clone();
            }
            self.pending.push_back(msg);
        }
    }

    /// The next notification `method` (from those already seen first).
    async fn notification(&mut self, method: &str) -> Value {
        if let Some(i) = self.pending.iter().position(|m| m["method"] == method) {
            return self.pending.remove(i).unwrap()["params"].clone();
        }
        loop {
            let msg = self.next_message().await;
            if msg["method"] == method {
                return msg["params"].clone();
            }
            self.pending.push_back(msg);
        }
    }

    async fn initialize(&mut self, root: &std::path::Path, encodings: &[&str]) -> Value {
        let root_uri = url(root);
        let result = self
            .request(
                "initialize",
                json!({
                    "processId": null,
                    "rootUri": root_uri,
                    "workspaceFolders": [{"uri": root_uri, "name": "w"}],
                    "capabilities": {"general": {"positionEncodings": encodings}},
                }),
            )
            .await;
        self.notify("initialized", json!({})).await;
        result
    }

    /// Wait for the server to end and give its exit code.
    async fn exit_code(&mut self) -> u8 {
        let server = self.server.take().unwrap();
        tokio::time::timeout(Duration::from_secs(5), server)
            .await
            .expect("the server ends promptly after exit")
            .unwrap()
    }
}

/// A request or notification; `params` left out when null, as clients do
/// for `shutdown` and `exit`.
fn message(id: Option<i64>, method: &str, params: Value) -> Value {
    let mut m = json!({"jsonrpc": "2.0", "method": method});
    if let Some(id) = id {
        m["id"] = json!(id);
    }
    if !params.is_null() {
        m["params"] = params;
    }
    m
}

fn url(path: &std::path::Path) -> String {
    tower_lsp::lsp_types::Url::from_file_path(path)
        .unwrap()
        .to_string()
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn exit_after_shutdown_ends_with_0() {
    let dir = tempfile::tempdir().unwrap();
    let mut c = Client::start();
    c.initialize(dir.path(), &[]).await;
    // With `"params": null`, as some clients send it.
    c.send(json!({"jsonrpc": "2.0", "id": 99, "method": "shutdown", "params": null}))
        .await;
    let r = c.next_message().await;
    assert_eq!(r["id"], 99);
    assert!(r.get("error").is_none(), "{r}");
    c.notify("exit", Value::Null).await;
    // The client keeps its end open: the server must end anyway.
    assert_eq!(c.exit_code().await, 0);
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn exit_without_shutdown_ends_with_1() {
    let dir = tempfile::tempdir().unwrap();
    let mut c = Client::start();
    c.initialize(dir.path(), &[]).await;
    c.notify("exit", Value::Null).await;
    assert_eq!(c.exit_code().await, 1);
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn encoding_is_negotiated() {
    let dir = tempfile::tempdir().unwrap();
    let mut c = Client::start();
    let r = c.initialize(dir.path(), &["utf-16", "utf-8"]).await;
    assert_eq!(r["capabilities"]["positionEncoding"], "utf-8");
    let mut c = Client::start();
    let r = c.initialize(dir.path(), &[]).await;
    assert_eq!(r["capabilities"]["positionEncoding"], "utf-16");
    assert_eq!(r["capabilities"]["textDocumentSync"]["change"], 2);
}

const DECK: &str = "grid {\n  cells = 3 x 1 x 1\n  dx = 10 ft\n  dy = 10 ft\n  dz = 10 ft\n  top = 1000 ft\n}\nrock {\n  porosity = 0.2\n  kx = 100 psi   # Ω 😀\n}\n";

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn diagnostics_follow_the_latest_version() {
    let dir = tempfile::tempdir().unwrap();
    let deck = dir.path().join("d.rill");
    std::fs::write(&deck, DECK).unwrap();
    let uri = url(&deck);
    let mut c = Client::start();
    c.initialize(dir.path(), &[]).await;
    c.notify(
        "textDocument/didOpen",
        json!({"textDocument": {"uri": uri, "languageId": "rill", "version": 1, "text": DECK}}),
    )
    .await;
    let d = c.notification("textDocument/publishDiagnostics").await;
    assert_eq!(d["version"], 1);
    let unit = d["diagnostics"]
        .as_array()
        .unwrap()
        .iter()
        .find(|d| d["code"] == "unit.dimension")
        .expect("kx in psi is a dimension error")
        .clone();
    // `  kx = 100 psi`: psi at columns 11..14 of line 9.
    assert_eq!(unit["range"]["start"], json!({"line": 9, "character": 11}));
    assert_eq!(unit["range"]["end"], json!({"line": 9, "character": 14}));
    // Many quick changes: `psi` -> `md`, then comment edits after the emoji.
    c.notify(
        "textDocument/didChange",
        json!({"textDocument": {"uri": uri, "version": 2},
               "contentChanges": [{"range": {"start": {"line": 9, "character": 11}, "end": {"line": 9, "character": 14}}, "text": "md"}]}),
    )
    .await;
    for v in 3..30 {
        // `  kx = 100 md   # Ω 😀` is 22 UTF-16 units long.
        c.notify(
            "textDocument/didChange",
            json!({"textDocument": {"uri": uri, "version": v},
                   "contentChanges": [{"range": {"start": {"line": 9, "character": 22}, "end": {"line": 9, "character": 22}}, "text": "!"}]}),
        )
        .await;
    }
    // A stale change is dropped.
    c.notify(
        "textDocument/didChange",
        json!({"textDocument": {"uri": uri, "version": 5},
               "contentChanges": [{"range": {"start": {"line": 0, "character": 0}, "end": {"line": 0, "character": 0}}, "text": "garbage"}]}),
    )
    .await;
    let mut last = 1;
    loop {
        let d = c.notification("textDocument/publishDiagnostics").await;
        if d["uri"] != json!(uri) {
            continue;
        }
        let v = d["version"].as_i64().unwrap();
        assert!(v >= last, "version {v} published after {last}");
        last = v;
        if v == 29 {
            assert!(
                d["diagnostics"]
                    .as_array()
                    .unwrap()
                    .iter()
                    .all(|d| d["code"] != "unit.dimension"),
                "{d}"
            );
            break;
        }
    }
    let t = c.request("rill/documentText", json!({"uri": uri})).await;
    assert_eq!(t["version"], 29);
    let text = t["text"].as_str().unwrap();
    assert!(text.starts_with("grid {"));
    assert!(text.contains(&format!("kx = 100 md   # Ω 😀{}\n", "!".repeat(27))));
}

/// A reference model of the client's text: lines end at `\n`, `\r\n` or
/// `\r`; columns count UTF-16 or UTF-8 units; columns past the end of a
/// line mean its end, lines past the last one the end of the text.
mod reference {
    pub fn lines(text: &str) -> Vec<(usize, usize)> {
        // (start, end of content) of each line.
        let b = text.as_bytes();
        let mut out = Vec::new();
        let mut start = 0;
        let mut i = 0;
        while i < b.len() {
            match b[i] {
                b'\r' if i + 1 < b.len() && b[i + 1] == b'\n' => {
                    out.push((start, i));
                    i += 2;
                    start = i;
                }
                b'\n' | b'\r' => {
                    out.push((start, i));
                    i += 1;
                    start = i;
                }
                _ => i += 1,
            }
        }
        out.push((start, b.len()));
        out
    }

    pub fn units(c: char, utf8: bool) -> usize {
        if utf8 {
            c.len_utf8()
        } else {
            c.len_utf16()
        }
    }

    pub fn offset(text: &str, line: usize, col: usize, utf8: bool) -> usize {
        let ls = lines(text);
        let Some(&(start, end)) = ls.get(line) else {
            return text.len();
        };
        let mut acc = 0;
        for (i, c) in text[start..end].char_indices() {
            if acc >= col {
                return start + i;
            }
            acc += units(c, utf8);
        }
        end
    }
}

struct Rng(u64);
impl Rng {
    fn next(&mut self) -> u64 {
        // xorshift64*: enough for test data, and reproducible from the seed.
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n.max(1) as u64) as usize
    }
}

const PIECES: &[&str] = &[
    "a", "kx", " ", "=", "150 md", "Ω", "😀", "é", "中", "\n", "\r\n", "\r", "{", "}", "\"", "#",
    "𝄞x", "",
];

/// A random position on a character boundary of `text`, sometimes past
/// the end of its line or of the text.
fn random_position(rng: &mut Rng, text: &str, utf8: bool) -> (usize, usize) {
    let ls = reference::lines(text);
    let line = if rng.below(20) == 0 {
        ls.len() + rng.below(3)
    } else {
        rng.below(ls.len())
    };
    let Some(&(start, end)) = ls.get(line) else {
        return (line, rng.below(5));
    };
    let chars: Vec<char> = text[start..end].chars().collect();
    let units = |cs: &[char]| -> usize { cs.iter().map(|&c| reference::units(c, utf8)).sum() };
    if rng.below(15) == 0 {
        // Past the end of the line: clamps to its end.
        return (line, units(&chars) + 1 + rng.below(10));
    }
    let k = rng.below(chars.len() + 1);
    (line, units(&chars[..k]))
}

async fn random_edits(seed: u64, utf8: bool, edits: usize) {
    let dir = tempfile::tempdir().unwrap();
    let deck = dir.path().join("random.rill");
    let uri = url(&deck);
    let mut text = String::from("grid {\n  dx = 10 ft # Ω😀\r\n}\rrock { kx = 1 md }\n");
    let mut c = Client::start();
    let r = c
        .initialize(dir.path(), if utf8 { &["utf-8"] } else { &["utf-16"] })
        .await;
    assert_eq!(
        r["capabilities"]["positionEncoding"],
        if utf8 { "utf-8" } else { "utf-16" }
    );
    c.notify(
        "textDocument/didOpen",
        json!({"textDocument": {"uri": uri, "languageId": "rill", "version": 0, "text": text}}),
    )
    .await;
    let mut rng = Rng(seed);
    let mut version = 0;
    let mut done = 0;
    while done < edits {
        let n = 1 + rng.below(3);
        let mut changes = Vec::new();
        for _ in 0..n {
            let (l1, c1) = random_position(&mut rng, &text, utf8);
            let (l2, c2) = random_position(&mut rng, &text, utf8);
            let mut a = (reference::offset(&text, l1, c1, utf8), l1, c1);
            let mut b = (reference::offset(&text, l2, c2, utf8), l2, c2);
            if a.0 > b.0 {
                std::mem::swap(&mut a, &mut b);
            }
            // Mostly short replacements, like typing.
            if rng.below(4) != 0 {
                b = a;
            }
            let mut insert = String::new();
            for _ in 0..rng.below(4) {
                insert.push_str(PIECES[rng.below(PIECES.len())]);
            }
            text.replace_range(a.0..b.0, &insert);
            changes.push(json!({
                "range": {"start": {"line": a.1, "character": a.2}, "end": {"line": b.1, "character": b.2}},
                "text": insert,
            }));
            done += 1;
        }
        version += 1;
        let changes_dbg = serde_json::to_string(&changes).unwrap();
        c.notify(
            "textDocument/didChange",
            json!({"textDocument": {"uri": uri, "version": version}, "contentChanges": changes}),
        )
        .await;
        if rng.below(40) == 0 {
            // Requests on the text as it stands now, at any position, answer
            // without error (whatever state the random text is in).
            let (line, character) = random_position(&mut rng, &text, utf8);
            let at = json!({"textDocument": {"uri": uri}, "position": {"line": line, "character": character}});
            for method in [
                "textDocument/hover",
                "textDocument/completion",
                "textDocument/definition",
            ] {
                c.request(method, at.clone()).await;
            }
            for method in [
                "textDocument/semanticTokens/full",
                "textDocument/documentSymbol",
                "textDocument/foldingRange",
                "textDocument/codeLens",
            ] {
                c.request(method, json!({"textDocument": {"uri": uri}}))
                    .await;
            }
            c.request(
                "textDocument/formatting",
                json!({"textDocument": {"uri": uri}, "options": {"tabSize": 2, "insertSpaces": true}}),
            )
            .await;
        }
        if rng.below(50) == 0 {
            // A repeated version: the server drops it.
            c.notify(
                "textDocument/didChange",
                json!({"textDocument": {"uri": uri, "version": version},
                       "contentChanges": [{"text": "dropped"}]}),
            )
            .await;
        }
        if rng.below(200) == 0
            || done >= edits
            || std::env::var_os("RILL_LSP_CHECK_EVERY").is_some()
        {
            let got = c.request("rill/documentText", json!({"uri": uri})).await;
            assert_eq!(got["version"], version);
            assert_eq!(
                got["text"].as_str().unwrap(),
                text,
                "seed {seed}, after {done} edits; last changes {changes_dbg}"
            );
        }
    }
    // Diagnostics of the last version arrive, and never an older one after a newer.
    let mut last = -1;
    loop {
        let d = c.notification("textDocument/publishDiagnostics").await;
        let v = d["version"].as_i64().unwrap_or(-1);
        assert!(v >= last, "version {v} published after {last}");
        last = v;
        if v == version as i64 {
            break;
        }
    }
    c.request("shutdown", Value::Null).await;
    c.notify("exit", Value::Null).await;
    assert_eq!(c.exit_code().await, 0);
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn random_incremental_edits_keep_the_text_utf16() {
    random_edits(0x5eed_1234_abcd_0001, false, 3000).await;
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn random_incremental_edits_keep_the_text_utf8() {
    random_edits(0x5eed_1234_abcd_0002, true, 3000).await;
}

const BLOCK: &str = include_str!("../../../examples/teaching-block.rill");

/// Wait for diagnostics published for `uri` that satisfy `pred`.
async fn diagnostics_until(
    c: &mut Client,
    uri: &str,
    pred: impl Fn(&[Value]) -> bool,
) -> Vec<Value> {
    loop {
        let d = c.notification("textDocument/publishDiagnostics").await;
        if d["uri"] == json!(uri) {
            let list = d["diagnostics"].as_array().cloned().unwrap_or_default();
            if pred(&list) {
                return list;
            }
        }
    }
}

fn has(code: &str) -> impl Fn(&[Value]) -> bool + '_ {
    move |list: &[Value]| list.iter().any(|d| d["code"] == code)
}

const WELLS_BAD: &str = "well \"W2\" {\n  role = producer\n  location = (2, 2)\n  radius = 0.3 ft\n  control = rate 10 bbl/day\n  bhp_limit = 500 psi\n}\n";

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn include_diagnostics_go_to_their_file_and_clear() {
    let dir = tempfile::tempdir().unwrap();
    let main = dir.path().join("main.rill");
    let wells = dir.path().join("wells.rill");
    let main_text = format!("{BLOCK}\ninclude \"wells.rill\"\n");
    std::fs::write(&main, &main_text).unwrap();
    std::fs::write(&wells, WELLS_BAD).unwrap();
    let (main_uri, wells_uri) = (url(&main), url(&wells));
    let mut c = Client::start();
    c.initialize(dir.path(), &[]).await;
    c.notify(
        "textDocument/didOpen",
        json!({"textDocument": {"uri": main_uri, "languageId": "rill", "version": 1, "text": main_text}}),
    )
    .await;
    // A reservoir rate where a surface rate is meant, in the included file.
    let list = diagnostics_until(&mut c, &wells_uri, has("unit.volume-kind")).await;
    let d = list
        .iter()
        .find(|d| d["code"] == "unit.volume-kind")
        .unwrap();
    assert_eq!(d["range"]["start"]["line"], 4);
    // Fixed on disk: the watched-file notice makes the server read it again.
    std::fs::write(&wells, WELLS_BAD.replace("bbl/day", "stb/day")).unwrap();
    c.notify(
        "workspace/didChangeWatchedFiles",
        json!({"changes": [{"uri": wells_uri, "type": 2}]}),
    )
    .await;
    diagnostics_until(&mut c, &wells_uri, |l| l.is_empty()).await;
    // Broken again, then the include line goes: its diagnostics are cleared.
    std::fs::write(&wells, WELLS_BAD).unwrap();
    c.notify(
        "workspace/didChangeWatchedFiles",
        json!({"changes": [{"uri": wells_uri, "type": 2}]}),
    )
    .await;
    diagnostics_until(&mut c, &wells_uri, has("unit.volume-kind")).await;
    let last_line = main_text.lines().count() - 1;
    c.notify(
        "textDocument/didChange",
        json!({"textDocument": {"uri": main_uri, "version": 2},
               "contentChanges": [{"range": {"start": {"line": last_line, "character": 0}, "end": {"line": last_line + 1, "character": 0}}, "text": ""}]}),
    )
    .await;
    diagnostics_until(&mut c, &wells_uri, |l| l.is_empty()).await;
    let t = c
        .request("rill/documentText", json!({"uri": main_uri}))
        .await;
    assert!(!t["text"].as_str().unwrap().contains("include"));
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn include_outside_the_workspace_is_refused_unless_allowed() {
    let dir = tempfile::tempdir().unwrap();
    let ws = dir.path().join("ws");
    let outside = dir.path().join("shared");
    std::fs::create_dir_all(&ws).unwrap();
    std::fs::create_dir_all(&outside).unwrap();
    std::fs::write(
        outside.join("wells.rill"),
        WELLS_BAD.replace("bbl/day", "stb/day"),
    )
    .unwrap();
    let main = ws.join("main.rill");
    let main_text = format!("{BLOCK}\ninclude \"../shared/wells.rill\"\n");
    std::fs::write(&main, &main_text).unwrap();
    let main_uri = url(&main);
    let mut c = Client::start();
    c.initialize(&ws, &[]).await;
    c.notify(
        "textDocument/didOpen",
        json!({"textDocument": {"uri": main_uri, "languageId": "rill", "version": 1, "text": main_text}}),
    )
    .await;
    diagnostics_until(&mut c, &main_uri, has("deck.include")).await;
    c.notify(
        "workspace/didChangeConfiguration",
        json!({"settings": {"rill": {"allowedIncludePaths": [outside]}}}),
    )
    .await;
    let list = diagnostics_until(&mut c, &main_uri, |l| !has("deck.include")(l)).await;
    assert!(list.is_empty(), "{list:?}");
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn inlay_hints_follow_the_setting() {
    let dir = tempfile::tempdir().unwrap();
    let deck = dir.path().join("b.rill");
    std::fs::write(&deck, BLOCK).unwrap();
    let uri = url(&deck);
    let mut c = Client::start();
    c.initialize(dir.path(), &[]).await;
    c.notify(
        "textDocument/didOpen",
        json!({"textDocument": {"uri": uri, "languageId": "rill", "version": 1, "text": BLOCK}}),
    )
    .await;
    let whole = json!({"textDocument": {"uri": uri}, "range": {"start": {"line": 0, "character": 0}, "end": {"line": 999, "character": 0}}});
    let on = c.request("textDocument/inlayHint", whole.clone()).await;
    assert!(
        !on.as_array().unwrap().is_empty(),
        "hints are on by default"
    );
    c.notify(
        "workspace/didChangeConfiguration",
        json!({"settings": {"rill": {"inlayHints": {"enabled": false}}}}),
    )
    .await;
    let off = c.request("textDocument/inlayHint", whole).await;
    assert_eq!(off, json!([]));
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn run_is_one_per_case_and_cancellable() {
    let dir = tempfile::tempdir().unwrap();
    let deck = dir.path().join("long.rill");
    // Thousands of small steps: long enough to be cancelled while it runs.
    let text = BLOCK
        .replace("cells = 11 x 11 x 1", "cells = 30 x 30 x 2")
        .replace("end = 180 day", "end = 36500 day")
        .replace("first_step = 0.05 day", "first_step = 0.001 day")
        .replace(
            "max_step = 10 day",
            "max_step = 0.01 day\n  max_steps = 5000000",
        );
    std::fs::write(&deck, &text).unwrap();
    let uri = url(&deck);
    let mut c = Client::start();
    let root = url(dir.path());
    c.request(
        "initialize",
        json!({"processId": null, "rootUri": root,
               "capabilities": {"window": {"workDoneProgress": true}}}),
    )
    .await;
    c.notify("initialized", json!({})).await;
    c.notify(
        "textDocument/didOpen",
        json!({"textDocument": {"uri": uri, "languageId": "rill", "version": 1, "text": text}}),
    )
    .await;
    let clean = diagnostics_until(&mut c, &uri, |_| true).await;
    assert!(clean.iter().all(|d| d["severity"] != 1), "{clean:?}");
    let run = json!({"command": "rill.run", "arguments": [uri]});
    assert_eq!(
        c.request("workspace/executeCommand", run.clone()).await,
        Value::Null
    );
    // The run has begun reporting progress.
    let begin = c.notification("$/progress").await;
    assert_eq!(begin["value"]["kind"], "begin");
    assert_eq!(begin["value"]["cancellable"], true);
    let token = begin["token"].clone();
    assert!(c
        .server_requests
        .iter()
        .any(|r| r["method"] == "window/workDoneProgress/create" && r["params"]["token"] == token));
    // A second run of the same case is refused while the first goes on.
    c.request("workspace/executeCommand", run).await;
    loop {
        let m = c.notification("window/showMessage").await;
        let text = m["message"].as_str().unwrap_or_default().to_string();
        assert!(
            !text.contains("finished"),
            "the run ended before it could be refused: {text}"
        );
        if text.contains("already running") {
            break;
        }
    }
    c.notify("window/workDoneProgress/cancel", json!({"token": token}))
        .await;
    loop {
        let m = c.notification("window/showMessage").await;
        let text = m["message"].as_str().unwrap_or_default().to_string();
        assert!(!text.contains("finished"), "{text}");
        if text.contains("cancelled") {
            break;
        }
    }
    // Nothing was written for the cancelled run.
    assert!(!dir.path().join("long.out").exists());
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn without_workspace_folders_the_deck_folder_is_the_root() {
    let dir = tempfile::tempdir().unwrap();
    let ws = dir.path().join("cases");
    std::fs::create_dir_all(&ws).unwrap();
    let good = WELLS_BAD.replace("bbl/day", "stb/day");
    std::fs::write(ws.join("wells.rill"), &good).unwrap();
    std::fs::write(dir.path().join("wells.rill"), &good).unwrap();
    let main = ws.join("main.rill");
    let uri = url(&main);
    let mut c = Client::start();
    c.request("initialize", json!({"processId": null, "capabilities": {}}))
        .await;
    c.notify("initialized", json!({})).await;
    // Beside the deck: read; one folder up: outside, refused.
    for (v, inc, refused) in [(1, "wells.rill", false), (2, "../wells.rill", true)] {
        let text = format!("{BLOCK}\ninclude \"{inc}\"\n");
        if v == 1 {
            c.notify(
                "textDocument/didOpen",
                json!({"textDocument": {"uri": uri, "languageId": "rill", "version": v, "text": text}}),
            )
            .await;
        } else {
            c.notify(
                "textDocument/didChange",
                json!({"textDocument": {"uri": uri, "version": v}, "contentChanges": [{"text": text}]}),
            )
            .await;
        }
        let list = loop {
            let d = c.notification("textDocument/publishDiagnostics").await;
            if d["uri"] == json!(uri) && d["version"] == v {
                break d["diagnostics"].as_array().cloned().unwrap_or_default();
            }
        };
        assert_eq!(has("deck.include")(&list), refused, "{inc}: {list:?}");
    }
}

/// A 100 000-factor product in the rock block, served on threads with
/// small stacks (the runtime's workers and blocking threads, and the
/// thread that drives it): the analysis, formatting, semantic tokens,
/// hover and inlay hints walk the chain without recursing once per factor.
#[test]
fn a_100_000_factor_product_is_served_on_small_stacks() {
    const STACK: usize = 256 * 1024;
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .worker_threads(2)
        .thread_stack_size(STACK)
        .enable_all()
        .build()
        .unwrap();
    let driver = std::thread::Builder::new()
        .stack_size(STACK)
        .spawn(move || runtime.block_on(long_product_session()))
        .unwrap();
    driver
        .join()
        .expect("the server answered without a stack overflow");
}

async fn long_product_session() {
    let dir = tempfile::tempdir().unwrap();
    let deck = dir.path().join("long.rill");
    // Ends in `psi`: one dimension error over the whole chain.
    let chain = format!("kx = 50 md{} * 1 psi", " * 1".repeat(99_998));
    let text = BLOCK.replace("kx = 50 md", &chain);
    let line = text.lines().position(|l| l.contains("kx =")).unwrap();
    std::fs::write(&deck, &text).unwrap();
    let uri = url(&deck);
    let mut c = Client::start();
    c.initialize(dir.path(), &[]).await;
    c.notify(
        "textDocument/didOpen",
        json!({"textDocument": {"uri": uri, "languageId": "rill", "version": 1, "text": text}}),
    )
    .await;
    let list = diagnostics_until(&mut c, &uri, has("unit.dimension")).await;
    let d = list.iter().find(|d| d["code"] == "unit.dimension").unwrap();
    assert_eq!(d["range"]["start"]["line"], line);
    let doc = json!({"uri": uri});
    let middle = json!({"line": line, "character": 200_000});
    let formatted = c
        .request(
            "textDocument/formatting",
            json!({"textDocument": doc, "options": {"tabSize": 2, "insertSpaces": true}}),
        )
        .await;
    assert!(formatted.is_null() || formatted.is_array(), "{formatted}");
    let tokens = c
        .request(
            "textDocument/semanticTokens/full",
            json!({"textDocument": doc}),
        )
        .await;
    // Five numbers per token; at least one token per factor and operator.
    assert!(tokens["data"].as_array().unwrap().len() >= 5 * 199_996);
    c.request(
        "textDocument/hover",
        json!({"textDocument": doc, "position": middle}),
    )
    .await;
    let end = json!({"line": line + 1, "character": 0});
    c.request(
        "textDocument/inlayHint",
        json!({"textDocument": doc, "range": {"start": {"line": 0, "character": 0}, "end": end}}),
    )
    .await;
    c.request("shutdown", Value::Null).await;
    c.notify("exit", Value::Null).await;
    assert_eq!(c.exit_code().await, 0);
}
