//! Both front ends break lines where the language does: a deck with lone
//! `\r`, `\r\n` and `\n` line ends and a diagnostic on a line of each kind
//! gets the same line and column from `rill check --format json` and from
//! `rill lsp` (driven over its stdin and stdout), and the text output
//! shows each diagnostic on its own line.

use serde_json::{json, Value};
use std::io::{BufRead, BufReader, Read, Write};
use std::path::Path;
use std::process::{Child, ChildStdin, Command, Stdio};
use std::sync::mpsc::{channel, Receiver};
use std::time::Duration;

fn rill() -> Command {
    Command::new(env!("CARGO_BIN_EXE_rill"))
}

const LINES: &[&str] = &[
    "grid {",
    "  cells = 3 x 3 x 1",
    "  dx = 100 ft",
    "  dy = 100 ft",
    "  dz = 30 ft",
    "  top = 5000 ft",
    "}",
    "rock {",
    "  porosity = 0.2",
    "  kx = 150 psi",
    "  ky = 20 psi",
    "  kz = 5 psi",
    "}",
    "fluid \"brine\" {",
    "  viscosity = 0.7 cP",
    "  fvf = 1.01 rb/stb",
    "  density = 64.0 lb/ft^3",
    "}",
    "initial {",
    "  pressure = 2500 psi at 5015 ft",
    "}",
    "timeline {",
    "  end = 10 day",
    "}",
];

/// The deck with line `i` ended by `\r`, `\r\n` or `\n` in turn, so that
/// the three wrong permeabilities (lines 9, 10 and 11, 0-based) end with
/// one kind each.
fn deck() -> String {
    let ends = ["\r", "\r\n", "\n"];
    LINES
        .iter()
        .enumerate()
        .map(|(i, l)| format!("{l}{}", ends[i % 3]))
        .collect()
}

/// Frames read from the server on a thread, so that waits have a time limit.
struct Server {
    child: Child,
    stdin: ChildStdin,
    frames: Receiver<Value>,
}

impl Server {
    fn start() -> Server {
        let mut child = rill()
            .arg("lsp")
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .stderr(Stdio::null())
            .spawn()
            .unwrap();
        let stdin = child.stdin.take().unwrap();
        let mut out = BufReader::new(child.stdout.take().unwrap());
        let (tx, frames) = channel();
        std::thread::spawn(move || loop {
            let mut len = None;
            loop {
                let mut line = String::new();
                if out.read_line(&mut line).unwrap_or(0) == 0 {
                    return;
                }
                let line = line.trim_end();
                if line.is_empty() {
                    break;
                }
                if let Some(n) = line.strip_prefix("Content-Length: ") {
                    len = n.parse::<usize>().ok();
                }
            }
            let mut body = vec![0; len.unwrap_or(0)];
            if out.read_exact(&mut body).is_err() {
                return;
            }
            let Ok(v) = serde_json::from_slice(&body) else {
                return;
            };
            if tx.send(v).is_err() {
                return;
            }
        });
        Server {
            child,
            stdin,
            frames,
        }
    }

    fn send(&mut self, msg: Value) {
        let body = serde_json::to_vec(&msg).unwrap();
        write!(self.stdin, "Content-Length: {}\r\n\r\n", body.len()).unwrap();
        self.stdin.write_all(&body).unwrap();
        self.stdin.flush().unwrap();
    }

    /// The next message that is not a request from the server (those are
    /// answered: `[null]` for configuration, else `null`).
    fn next(&mut self) -> Value {
        loop {
            let msg = self
                .frames
                .recv_timeout(Duration::from_secs(30))
                .expect("the server answers within 30 s");
            if msg.get("method").is_some() && msg.get("id").is_some() {
                let result = if msg["method"] == "workspace/configuration" {
                    json!([null])
                } else {
                    Value::Null
                };
                self.send(json!({"jsonrpc": "2.0", "id": msg["id"], "result": result}));
                continue;
            }
            return msg;
        }
    }
}

/// The server's diagnostics for `deck` (0-based lines, UTF-16 columns).
fn server_diagnostics(dir: &Path, deck: &Path, text: &str) -> Vec<Value> {
    let root = file_url(dir);
    let uri = file_url(deck);
    let mut s = Server::start();
    s.send(
        json!({"jsonrpc": "2.0", "id": 1, "method": "initialize", "params": {
        "processId": null, "rootUri": root,
        "workspaceFolders": [{"uri": root, "name": "w"}], "capabilities": {}}}),
    );
    while s.next().get("id") != Some(&json!(1)) {}
    s.send(json!({"jsonrpc": "2.0", "method": "initialized", "params": {}}));
    s.send(
        json!({"jsonrpc": "2.0", "method": "textDocument/didOpen", "params": {
        "textDocument": {"uri": uri, "languageId": "rill", "version": 1, "text": text}}}),
    );
    let list = loop {
        let m = s.next();
        if m["method"] == "textDocument/publishDiagnostics" && m["params"]["uri"] == json!(uri) {
            let list = m["params"]["diagnostics"].as_array().cloned().unwrap();
            if !list.is_empty() {
                break list;
            }
        }
    };
    s.send(json!({"jsonrpc": "2.0", "id": 2, "method": "shutdown"}));
    while s.next().get("id") != Some(&json!(2)) {}
    s.send(json!({"jsonrpc": "2.0", "method": "exit"}));
    let _ = s.child.wait();
    list
}

fn file_url(p: &Path) -> String {
    format!("file://{}", p.display())
}

#[test]
fn check_json_and_the_server_agree_on_every_kind_of_line_end() {
    let dir = tempfile::tempdir().unwrap();
    let dir_path = dir.path().canonicalize().unwrap();
    let deck_path = dir_path.join("mixed.rill");
    let text = deck();
    std::fs::write(&deck_path, &text).unwrap();

    let out = rill()
        .args(["check", "--format", "json"])
        .arg(&deck_path)
        .output()
        .unwrap();
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    let mut cli: Vec<(String, u64, u64, u64, u64)> = v["diagnostics"]
        .as_array()
        .unwrap()
        .iter()
        .map(|d| {
            let n = |k: &str| d[k].as_u64().unwrap();
            let code = d["code"].as_str().unwrap().to_string();
            (code, n("line"), n("column"), n("end_line"), n("end_column"))
        })
        .collect();
    cli.sort();
    // One dimension error on each of lines 10, 11 and 12 (1-based), which
    // end with `\r`, `\r\n` and `\n`.
    let lines: Vec<u64> = cli
        .iter()
        .filter(|d| d.0 == "unit.dimension")
        .map(|d| d.1)
        .collect();
    assert_eq!(lines, vec![10, 11, 12], "{cli:?}");
    for (i, d) in cli.iter().filter(|d| d.0 == "unit.dimension").enumerate() {
        let line = LINES[9 + i];
        let col = line.find("psi").unwrap() as u64 + 1;
        assert!(
            d.2 <= col && col <= d.4,
            "{d:?} should cover `psi` in {line:?}"
        );
    }

    let mut server: Vec<(String, u64, u64, u64, u64)> =
        server_diagnostics(&dir_path, &deck_path, &text)
            .iter()
            .map(|d| {
                let r = &d["range"];
                let n = |p: &str, k: &str| r[p][k].as_u64().unwrap() + 1;
                let code = d["code"].as_str().unwrap().to_string();
                (
                    code,
                    n("start", "line"),
                    n("start", "character"),
                    n("end", "line"),
                    n("end", "character"),
                )
            })
            .collect();
    server.sort();
    assert_eq!(cli, server);

    // The text output shows each dimension error on its own source line.
    let out = rill().arg("check").arg(&deck_path).output().unwrap();
    let text_out = String::from_utf8_lossy(&out.stderr);
    for (i, n) in [10, 11, 12].iter().enumerate() {
        let shown = format!("{n} │ {}", LINES[9 + i]);
        assert!(text_out.contains(&shown), "no `{shown}` in:\n{text_out}");
        assert!(
            text_out.contains(&format!("mixed.rill:{n}:")),
            "no location on line {n} in:\n{text_out}"
        );
    }
}
