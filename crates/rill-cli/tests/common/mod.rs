//! A client that drives `rill lsp` over its pipes for the command-line
//! crate's end-to-end tests: framing, answers to the server's own
//! requests, and the few protocol steps the tests share.
#![allow(dead_code)] // each test file uses part of it

use serde_json::{json, Value};
use std::io::{BufRead, BufReader, Read, Write};
use std::process::{Child, ChildStdin, Command, Stdio};
use std::sync::mpsc::{channel, Receiver};
use std::time::Duration;

pub struct Server {
    pub child: Child,
    stdin: ChildStdin,
    frames: Receiver<Value>,
}

impl Server {
    /// `rill lsp` started, not yet initialised.
    pub fn start() -> Server {
        let mut child = Command::new(env!("CARGO_BIN_EXE_rill"))
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
            let v: Value = serde_json::from_slice(&body).expect("whole JSON frames");
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

    /// `initialize` with `root` (a `file:` URI) as the one workspace
    /// folder, or with no workspace at all, then `initialized`.
    pub fn initialize(&mut self, root: Option<&str>) {
        let folders = match root {
            Some(r) => json!([{"uri": r, "name": "w"}]),
            None => Value::Null,
        };
        self.request(
            1,
            "initialize",
            json!({"processId": null, "rootUri": root, "workspaceFolders": folders,
                   "capabilities": {}}),
        );
        self.send(json!({"jsonrpc": "2.0", "method": "initialized", "params": {}}));
    }

    pub fn send(&mut self, msg: Value) {
        let body = serde_json::to_vec(&msg).unwrap();
        write!(self.stdin, "Content-Length: {}\r\n\r\n", body.len()).unwrap();
        self.stdin.write_all(&body).unwrap();
        self.stdin.flush().unwrap();
    }

    /// The next message from the server that is not a request of its own
    /// (those are answered here: `workspace/configuration` with defaults).
    pub fn next(&mut self) -> Value {
        loop {
            let msg = self
                .frames
                .recv_timeout(Duration::from_secs(60))
                .expect("the server answers within 60 s");
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

    /// Sends a request and returns its answer, skipping other messages.
    pub fn request(&mut self, id: i64, method: &str, params: Value) -> Value {
        self.send(json!({"jsonrpc": "2.0", "id": id, "method": method, "params": params}));
        loop {
            let m = self.next();
            if m.get("id") == Some(&json!(id)) {
                return m;
            }
        }
    }

    pub fn open(&mut self, uri: &str, text: &str) {
        self.send(
            json!({"jsonrpc": "2.0", "method": "textDocument/didOpen", "params": {
            "textDocument": {"uri": uri, "languageId": "rill", "version": 1, "text": text}}}),
        );
    }

    /// The diagnostics of `uri` once they carry a `code`
    /// (`want` returns true), and every URI diagnostics were published for
    /// until then.
    pub fn diagnostics_until(
        &mut self,
        uri: &str,
        want: impl Fn(&[Value]) -> bool,
    ) -> (Vec<Value>, Vec<String>) {
        let mut targets = Vec::new();
        loop {
            let m = self.next();
            if m["method"] != "textDocument/publishDiagnostics" {
                continue;
            }
            let target = m["params"]["uri"].as_str().unwrap().to_string();
            let list = m["params"]["diagnostics"].as_array().unwrap().clone();
            if !targets.contains(&target) {
                targets.push(target.clone());
            }
            if target == uri && want(&list) {
                return (list, targets);
            }
        }
    }

    /// `shutdown` and `exit`; the server must end with code 0.
    pub fn stop(mut self) {
        self.send(json!({"jsonrpc": "2.0", "id": 9000, "method": "shutdown"}));
        while self.next().get("id") != Some(&json!(9000)) {}
        self.send(json!({"jsonrpc": "2.0", "method": "exit"}));
        assert_eq!(self.child.wait().unwrap().code(), Some(0));
    }
}
