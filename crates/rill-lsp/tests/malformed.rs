//! Malformed messages are answered with the JSON-RPC error they call for
//! and the session goes on; `$/` requests get "method not found".

use serde_json::{json, Value};
use std::time::Duration;
use tokio::io::{AsyncReadExt, AsyncWriteExt, DuplexStream, ReadHalf, WriteHalf};
use tokio::task::JoinHandle;

struct Client {
    write: WriteHalf<DuplexStream>,
    read: ReadHalf<DuplexStream>,
    buf: Vec<u8>,
    server: JoinHandle<u8>,
}

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
            server,
        }
    }

    async fn raw(&mut self, bytes: &[u8]) {
        self.write.write_all(bytes).await.unwrap();
        self.write.flush().await.unwrap();
    }

    async fn body(&mut self, body: &str) {
        let framed = format!("Content-Length: {}\r\n\r\n{body}", body.len());
        self.raw(framed.as_bytes()).await;
    }

    /// The next message that is not a notification or a server request.
    async fn answer(&mut self) -> Value {
        loop {
            if let Some(end) = self.buf.windows(4).position(|w| w == b"\r\n\r\n") {
                let head = std::str::from_utf8(&self.buf[..end]).unwrap();
                let len: usize = head
                    .strip_prefix("Content-Length: ")
                    .unwrap()
                    .parse()
                    .unwrap();
                if self.buf.len() >= end + 4 + len {
                    let msg: Value = serde_json::from_slice(&self.buf[end + 4..end + 4 + len])
                        .expect("the server writes whole JSON messages");
                    self.buf.drain(..end + 4 + len);
                    if msg.get("method").is_none() {
                        return msg;
                    }
                    continue;
                }
            }
            let mut chunk = [0u8; 65536];
            let n = tokio::time::timeout(Duration::from_secs(20), self.read.read(&mut chunk))
                .await
                .expect("the server answers in time")
                .unwrap();
            assert!(n > 0, "the server closed its output");
            self.buf.extend_from_slice(&chunk[..n]);
        }
    }

    /// The refusal of a malformed message sent just before request `id`,
    /// and the answer to that request (the order is not promised).
    async fn refusal_then(&mut self, id: i64) -> (Value, Value) {
        let (a, b) = (self.answer().await, self.answer().await);
        if a["id"] == id {
            (b, a)
        } else {
            (a, b)
        }
    }

    async fn request(&mut self, id: i64, method: &str, params: Value) -> Value {
        let msg = json!({"jsonrpc": "2.0", "id": id, "method": method, "params": params});
        self.body(&msg.to_string()).await;
        let r = self.answer().await;
        assert_eq!(r["id"], id, "{r}");
        r
    }
}

/// Error code and id of an answer.
fn error_of(r: &Value) -> (i64, Value) {
    (
        r["error"]["code"].as_i64().expect("an error answer"),
        r["id"].clone(),
    )
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn malformed_messages_are_answered_and_the_session_goes_on() {
    let dir = tempfile::tempdir().unwrap();
    let root = tower_lsp::lsp_types::Url::from_file_path(dir.path()).unwrap();
    let mut c = Client::start();
    let r = c
        .request(
            1,
            "initialize",
            json!({"processId": null, "rootUri": root, "capabilities": {}}),
        )
        .await;
    assert!(r.get("result").is_some(), "{r}");
    c.body(r#"{"jsonrpc":"2.0","method":"initialized","params":{}}"#)
        .await;

    let doc = json!({"uri": root.join("a.rill").unwrap()});
    let cases: &[(&str, i64, Value)] = &[
        ("not json at all", -32700, Value::Null),
        (r#"{"jsonrpc":"2.0","id":2,"method":"#, -32700, Value::Null),
        (
            r#"[{"jsonrpc":"2.0","id":3,"method":"shutdown"}]"#,
            -32600,
            Value::Null,
        ),
        ("[]", -32600, Value::Null),
        ("42", -32600, Value::Null),
        (r#""text""#, -32600, Value::Null),
        (
            r#"{"jsonrpc":"2.0","id":{"a":1},"method":"x"}"#,
            -32600,
            Value::Null,
        ),
        (
            r#"{"jsonrpc":"2.0","id":1.5,"method":"x"}"#,
            -32600,
            Value::Null,
        ),
        (
            r#"{"jsonrpc":"2.0","id":1180591620717411303424,"method":"x"}"#,
            -32600,
            Value::Null,
        ),
        (r#"{"id":7,"method":"x"}"#, -32600, json!(7)),
        (
            r#"{"jsonrpc":"1.0","id":"eight","method":"x"}"#,
            -32600,
            json!("eight"),
        ),
        (r#"{"jsonrpc":2,"id":9,"method":"x"}"#, -32600, json!(9)),
        (r#"{"jsonrpc":"2.0","id":10,"method":5}"#, -32600, json!(10)),
    ];
    for (next, (body, code, id)) in (100..).zip(cases) {
        c.body(body).await;
        // Still serving: a real request right behind it is answered.
        let msg =
            json!({"jsonrpc": "2.0", "id": next, "method": "rill/documentText", "params": doc});
        c.body(&msg.to_string()).await;
        let (refusal, r) = c.refusal_then(next).await;
        assert_eq!(error_of(&refusal), (*code, id.clone()), "{body}: {refusal}");
        assert_eq!(r["id"], next, "{body}: {r}");
        assert!(r.get("error").is_none(), "{body}: {r}");
    }

    // Bad headers: a header line without a colon (length declared: the body
    // is skipped), a length that is not a number, and garbage before a frame.
    let ok = r#"{"jsonrpc":"2.0","id":500,"method":"rill/documentText","params":{"uri":"file:///a.rill"}}"#;
    let bad_headers = [
        "Content-Length: 2\r\nbroken header\r\n\r\n{}",
        "Content-Length: twelve\r\n\r\n{\"a\": 1}",
        "random bytes \u{1} \r\n\r\n more",
    ];
    for bad in bad_headers {
        c.raw(bad.as_bytes()).await;
        c.body(ok).await;
        let (refusal, r) = c.refusal_then(500).await;
        assert_eq!(
            error_of(&refusal),
            (-32700, Value::Null),
            "{bad:?}: {refusal}"
        );
        assert_eq!(r["id"], 500, "{bad:?}: {r}");
        assert!(r.get("error").is_none(), "{r}");
    }

    // `$/` requests the server does not handle: method not found.
    let r = c.request(600, "$/unknown", json!({})).await;
    assert_eq!(error_of(&r), (-32601, json!(600)));
    // `$/` notifications are ignored: the next answer is the next request's.
    c.body(r#"{"jsonrpc":"2.0","method":"$/unknown","params":{}}"#)
        .await;
    let r = c.request(601, "shutdown", Value::Null).await;
    assert!(r.get("error").is_none(), "{r}");
    c.body(r#"{"jsonrpc":"2.0","method":"exit"}"#).await;
    let code = tokio::time::timeout(Duration::from_secs(5), c.server)
        .await
        .expect("the server ends after exit")
        .unwrap();
    assert_eq!(code, 0);
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn answers_never_interleave_with_refusals() {
    // Many refusals and many answers at once: every frame the client reads
    // is whole JSON (`answer` fails otherwise), and each request is answered.
    let dir = tempfile::tempdir().unwrap();
    let root = tower_lsp::lsp_types::Url::from_file_path(dir.path()).unwrap();
    let mut c = Client::start();
    c.request(
        1,
        "initialize",
        json!({"processId": null, "rootUri": root, "capabilities": {}}),
    )
    .await;
    c.body(r#"{"jsonrpc":"2.0","method":"initialized","params":{}}"#)
        .await;
    let mut burst = String::new();
    for i in 0..200 {
        let ok = format!(
            r#"{{"jsonrpc":"2.0","id":{},"method":"rill/documentText","params":{{"uri":"file:///{}"}}}}"#,
            1000 + i,
            "q".repeat(i * 10)
        );
        burst += &format!("Content-Length: {}\r\n\r\n{ok}", ok.len());
        burst += "Content-Length: 3\r\n\r\n[1]";
    }
    c.raw(burst.as_bytes()).await;
    let (mut answered, mut refused) = (0, 0);
    while answered + refused < 400 {
        let r = c.answer().await;
        if r["id"].is_null() {
            assert_eq!(error_of(&r).0, -32600, "{r}");
            refused += 1;
        } else {
            assert!(r.get("error").is_none(), "{r}");
            answered += 1;
        }
    }
    assert_eq!((answered, refused), (200, 200));
}

/// A JSON value of any shape: what a broken or hostile client may send in
/// any field.
fn any_json() -> impl proptest::strategy::Strategy<Value = Value> {
    use proptest::prelude::*;
    let leaf = prop_oneof![
        Just(Value::Null),
        any::<bool>().prop_map(Value::from),
        any::<i64>().prop_map(Value::from),
        any::<f64>()
            .prop_map(|f| serde_json::Number::from_f64(f).map_or(Value::Null, Value::Number)),
        Just(json!(1_180_591_620_717_411_303_424.0)), // 2^70
        "[ -~]{0,20}".prop_map(Value::from),
    ];
    leaf.prop_recursive(3, 24, 6, |inner| {
        prop_oneof![
            proptest::collection::vec(inner.clone(), 0..6).prop_map(Value::from),
            proptest::collection::vec(
                (
                    prop_oneof![
                        Just("jsonrpc".to_string()),
                        Just("id".to_string()),
                        Just("method".to_string()),
                        Just("params".to_string()),
                        "[a-z]{1,8}"
                    ],
                    inner
                ),
                0..6
            )
            .prop_map(|kv| Value::Object(kv.into_iter().collect())),
        ]
    })
}

/// One garbage body: random bytes, any JSON, or a request or notification
/// with one field replaced by anything. Never a valid `shutdown` or `exit`,
/// and never an id of the probes (strings starting with `probe-`).
fn garbage() -> impl proptest::strategy::Strategy<Value = Vec<u8>> {
    use proptest::prelude::*;
    let method = prop_oneof![
        Just("textDocument/hover".to_string()),
        Just("textDocument/didOpen".to_string()),
        Just("textDocument/didChange".to_string()),
        Just("initialize".to_string()),
        Just("$/cancelRequest".to_string()),
        Just("$/unknown".to_string()),
        Just("rill/documentText".to_string()),
        "[a-z/$]{0,12}",
    ]
    .prop_filter("never shutdown or exit", |m| m != "shutdown" && m != "exit");
    let field = prop_oneof![Just("jsonrpc"), Just("id"), Just("method"), Just("params")];
    let mutated = (method, any::<bool>(), field, any_json(), any_json()).prop_map(
        |(method, with_id, field, value, params)| {
            let mut msg = json!({"jsonrpc": "2.0", "method": method, "params": params});
            if with_id {
                msg["id"] = json!(7);
            }
            msg[field] = value;
            serde_json::to_vec(&msg).unwrap()
        },
    );
    prop_oneof![
        proptest::collection::vec(any::<u8>(), 0..120),
        any_json().prop_map(|v| serde_json::to_vec(&v).unwrap()),
        mutated,
    ]
    .prop_filter("no probe ids", |b| !b.windows(6).any(|w| w == b"probe-"))
}

/// Protocol garbage campaign: correctly framed bodies of every kind of
/// garbage, each followed by a valid request; every valid request is
/// answered, so the session never ends over a message. `cargo test` runs
/// 300 bodies; `PROTOCOL_CASES=20000` runs more (see scripts/fuzz-checker).
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn random_garbage_never_ends_the_session() {
    use proptest::strategy::{Strategy, ValueTree};
    let cases: usize = std::env::var("PROTOCOL_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(300);
    let dir = tempfile::tempdir().unwrap();
    let root = tower_lsp::lsp_types::Url::from_file_path(dir.path()).unwrap();
    let mut c = Client::start();
    c.request(
        1,
        "initialize",
        json!({"processId": null, "rootUri": root, "capabilities": {}}),
    )
    .await;
    c.body(r#"{"jsonrpc":"2.0","method":"initialized","params":{}}"#)
        .await;
    let mut runner = proptest::test_runner::TestRunner::deterministic();
    let strategy = garbage();
    for n in 0..cases {
        let body = strategy.new_tree(&mut runner).unwrap().current();
        let mut framed = format!("Content-Length: {}\r\n\r\n", body.len()).into_bytes();
        framed.extend_from_slice(&body);
        c.raw(&framed).await;
        let probe = format!("probe-{n}");
        let ask = json!({"jsonrpc": "2.0", "id": probe, "method": "rill/documentText",
                         "params": {"uri": root.join("none.rill").unwrap()}});
        c.body(&ask.to_string()).await;
        // Answers to the garbage (refusals, errors to its id) come first or
        // not at all; the probe's answer must come.
        loop {
            let r = c.answer().await;
            if r["id"] == probe {
                break;
            }
        }
    }
    assert!(!c.server.is_finished(), "the server is still serving");
}
