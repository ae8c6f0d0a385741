//! One deck run through `rill run` (the binary) and through the language
//! server's `rill.run` (`rill_lsp::serve` on in-process pipes) writes the
//! same result set: `series.csv` byte for byte, `series.json` byte for byte
//! up to its last key, `timings`, and the same report cautions.
//!
//! It lives with the command line's tests because only they can start the
//! `rill` binary built from this tree.

use serde_json::{json, Value};
use std::collections::VecDeque;
use std::path::Path;
use std::process::Command;
use std::time::Duration;
use tokio::io::{AsyncReadExt, AsyncWriteExt, DuplexStream, ReadHalf, WriteHalf};

const WAIT: Duration = Duration::from_secs(120);

/// A JSON-RPC client over the server's pipes that answers the server's own
/// requests with `null` (`[null]` for configuration).
struct Client {
    write: WriteHalf<DuplexStream>,
    read: ReadHalf<DuplexStream>,
    buf: Vec<u8>,
    pending: VecDeque<Value>,
    next_id: i64,
}

impl Client {
    fn start() -> Client {
        let (client_side, server_side) = tokio::io::duplex(1 << 20);
        let (server_read, server_write) = tokio::io::split(server_side);
        tokio::spawn(rill_lsp::serve(server_read, server_write));
        let (read, write) = tokio::io::split(client_side);
        Client {
            write,
            read,
            buf: Vec::new(),
            pending: VecDeque::new(),
            next_id: 1,
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
        self.send(json!({"jsonrpc": "2.0", "method": method, "params": params}))
            .await;
    }

    async fn next_message(&mut self) -> Value {
        loop {
            if let Some(msg) = self.take_frame() {
                if msg.get("method").is_some() && msg.get("id").is_some() {
                    let result = if msg["method"] == "workspace/configuration" {
                        json!([null])
                    } else {
                        Value::Null
                    };
                    self.send(json!({"jsonrpc": "2.0", "id": msg["id"], "result": result}))
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
        let end = self.buf.windows(4).position(|w| w == b"\r\n\r\n")?;
        let head = std::str::from_utf8(&self.buf[..end]).unwrap();
        let len: usize = head
            .lines()
            .find_map(|l| l.strip_prefix("Content-Length: "))
            .unwrap()
            .trim()
            .parse()
            .unwrap();
        if self.buf.len() < end + 4 + len {
            return None;
        }
        let body = serde_json::from_slice(&self.buf[end + 4..end + 4 + len]).unwrap();
        self.buf.drain(..end + 4 + len);
        Some(body)
    }

    async fn request(&mut self, method: &str, params: Value) -> Value {
        let id = self.next_id;
        self.next_id += 1;
        self.send(json!({"jsonrpc": "2.0", "id": id, "method": method, "params": params}))
            .await;
        loop {
            let msg = self.next_message().await;
            if msg.get("id") == Some(&json!(id)) {
                assert!(msg.get("error").is_none(), "{method} failed: {msg}");
                return msg["result"].clone();
            }
            self.pending.push_back(msg);
        }
    }

    async fn notification(&mut self, method: &str) -> Value {
        if let Some(i) = self.pending.iter().position(|m| m["method"] == method) {
            return self.pending.remove(i).unwrap()["params"].clone();
        }
        loop {
            let msg = self.next_message().await;
            if msg["method"] == method {
                return msg["params"].clone();
            }
        }
    }
}

fn url(path: &Path) -> String {
    let text = path.to_str().expect("a UTF-8 temporary path");
    assert!(
        text.bytes()
            .all(|b| b.is_ascii_alphanumeric() || b"/._-".contains(&b)),
        "{text} would need percent-encoding"
    );
    format!("file://{text}")
}

/// `series.json` up to its last key, `timings`, which must be there.
fn without_timings(json: &str) -> &str {
    let at = json
        .rfind(",\n  \"timings\": {")
        .expect("series.json ends with its timings");
    // No top-level key after it: the rest is the timings object alone.
    let rest = &json[at + 2..];
    assert_eq!(
        rest.lines().filter(|l| l.starts_with("  \"")).count(),
        1,
        "{rest}"
    );
    assert!(rest.ends_with("  }\n}\n"), "{rest}");
    &json[..at]
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn rill_run_and_the_servers_run_write_the_same_results() {
    let dir = tempfile::tempdir().unwrap();
    let root = dir.path().canonicalize().unwrap();
    let deck = root.join("block.rill");
    let example = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../examples/teaching-block.rill");
    // A porosity above the usual range gives the report a caution of its own.
    let text = std::fs::read_to_string(example)
        .unwrap()
        .replace("porosity = 0.2", "porosity = 0.5");
    std::fs::write(&deck, &text).unwrap();

    // The command line, into a directory of its own.
    let cli_out = root.join("cli.out");
    let o = Command::new(env!("CARGO_BIN_EXE_rill"))
        .arg("run")
        .arg(&deck)
        .arg("--out")
        .arg(&cli_out)
        .arg("--quiet")
        .output()
        .unwrap();
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let cli_summary = String::from_utf8(o.stdout).unwrap();

    // The server, into the default `block.out/`.
    let uri = url(&deck);
    let root_uri = url(&root);
    let mut c = Client::start();
    c.request(
        "initialize",
        json!({"processId": null, "rootUri": root_uri,
               "workspaceFolders": [{"uri": root_uri, "name": "w"}], "capabilities": {}}),
    )
    .await;
    c.notify("initialized", json!({})).await;
    c.notify(
        "textDocument/didOpen",
        json!({"textDocument": {"uri": uri, "languageId": "rill", "version": 1, "text": text}}),
    )
    .await;
    loop {
        let d = c.notification("textDocument/publishDiagnostics").await;
        if d["uri"] == json!(uri) {
            let list = d["diagnostics"].as_array().unwrap();
            assert!(list.iter().all(|d| d["severity"] != 1), "{list:?}");
            break;
        }
    }
    c.request(
        "workspace/executeCommand",
        json!({"command": "rill.run", "arguments": [uri]}),
    )
    .await;
    let server_summary = loop {
        let m = c.notification("window/showMessage").await;
        let text = m["message"].as_str().unwrap_or_default().to_string();
        assert!(!text.contains("failed"), "{text}");
        if text.contains("finished") {
            break text;
        }
    };
    let server_out = root.join("block.out");

    let read = |dir: &Path, name: &str| std::fs::read_to_string(dir.join(name)).unwrap();
    assert_eq!(
        read(&cli_out, "series.csv"),
        read(&server_out, "series.csv"),
        "series.csv differs"
    );
    let (cli_json, server_json) = (
        read(&cli_out, "series.json"),
        read(&server_out, "series.json"),
    );
    assert_eq!(
        without_timings(&cli_json),
        without_timings(&server_json),
        "series.json differs before its timings"
    );
    // The report's cautions: the standing one, then the deck's porosity.
    let cautions: Value = serde_json::from_str::<Value>(&cli_json).unwrap()["cautions"].clone();
    let cautions: Vec<&str> = cautions
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c.as_str().unwrap())
        .collect();
    assert!(cautions[0].starts_with("Results are engineering estimates"));
    assert!(
        cautions.iter().any(|c| c.starts_with("sanity.porosity: ")),
        "{cautions:?}"
    );
    for c in &cautions {
        let html_escaped = c
            .replace('&', "&amp;")
            .replace('<', "&lt;")
            .replace('>', "&gt;");
        assert!(
            read(&server_out, "report.html").contains(&html_escaped),
            "{c}"
        );
    }

    // One summary: the same lines but for the wall time and the directory.
    let differs = |l: &str| l.starts_with("Run of ") || l.starts_with("  results in ");
    let same = |s: &str| -> Vec<String> {
        s.trim_end()
            .lines()
            .filter(|l| !differs(l))
            .map(str::to_string)
            .collect()
    };
    assert_eq!(same(&cli_summary), same(&server_summary));
    assert!(cli_summary.starts_with("Run of block.rill finished: reached 180 day in "));
    assert!(server_summary.starts_with("Run of block.rill finished: reached 180 day in "));
}
