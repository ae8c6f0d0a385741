//! The wire between the client and `tower-lsp`: base-protocol framing
//! (`Content-Length` headers) and JSON-RPC validation, so that a malformed
//! message is answered and the session goes on.
//!
//! `tower-lsp` 0.20 answers the first undecodable message with -32700 or
//! -32600 and then stops reading (its `FramedRead` ends after an error), so
//! the server sits between the client and `tower-lsp` on both sides:
//! - [`read_in`] parses the client's frames itself, refuses what is not a
//!   single JSON-RPC 2.0 object with an integer (within i64) or string id
//!   (batches, other ids, a missing or wrong `jsonrpc`, a bad header), and
//!   hands only valid messages, framed again, to `tower-lsp`;
//! - [`write_out`] is the only writer of the real output: it copies
//!   `tower-lsp`'s frames whole and puts the refusals between them, so the
//!   two never interleave within a message.
//!
//! Hand-written because the framing crates at hand (`tower-lsp`'s codec,
//! `lsp-server`'s reader) end the stream on the first bad header too, and
//! recovery (skip to the declared length or to the next header) is the
//! point here.

use serde_json::{json, Value};
use tokio::io::{AsyncRead, AsyncReadExt, AsyncWrite, AsyncWriteExt};
use tokio::sync::mpsc;

/// A header block longer than this is not a header.
const MAX_HEADER: usize = 8 * 1024;
/// Bodies above this are skipped unread and refused: the server never
/// holds more than this for one message.
pub const MAX_BODY: usize = 1 << 30;
/// Where to start again after garbage (compared case-insensitively).
const KEY: &[u8] = b"content-length:";

/// JSON-RPC error codes.
pub const PARSE_ERROR: i64 = -32700;
pub const INVALID_REQUEST: i64 = -32600;

/// What the reader found next.
#[derive(Debug, PartialEq)]
pub enum Event {
    /// A framed body (not yet validated).
    Body(Vec<u8>),
    /// Bytes that were not a usable frame, skipped; the reason.
    Bad(&'static str),
}

/// Incremental reader of base-protocol frames, with recovery.
pub struct Frames<R> {
    input: R,
    buf: Vec<u8>,
    /// Body bytes still to throw away (a bad header with a length, or a
    /// body over [`MAX_BODY`]).
    skip: usize,
    /// After a header without a usable length: drop bytes until the next
    /// `Content-Length:`.
    resync: bool,
    eof: bool,
}

impl<R: AsyncRead + Unpin> Frames<R> {
    pub fn new(input: R) -> Self {
        Frames {
            input,
            buf: Vec::new(),
            skip: 0,
            resync: false,
            eof: false,
        }
    }

    /// The next frame or refusal; `None` at the end of the input (an
    /// incomplete message there is dropped: nobody is left to answer).
    pub async fn next(&mut self) -> Option<Event> {
        loop {
            if let Some(ev) = self.step() {
                return Some(ev);
            }
            if self.eof {
                return None;
            }
            let mut chunk = vec![0u8; 64 * 1024];
            match self.input.read(&mut chunk).await {
                Ok(0) | Err(_) => self.eof = true,
                Ok(n) => self.buf.extend_from_slice(&chunk[..n]),
            }
        }
    }

    /// One decision on the bytes buffered so far, or `None` for more input.
    fn step(&mut self) -> Option<Event> {
        if self.skip > 0 {
            let n = self.skip.min(self.buf.len());
            self.buf.drain(..n);
            self.skip -= n;
            if self.skip > 0 {
                return None;
            }
        }
        if self.resync {
            match find_key(&self.buf) {
                Some(at) => {
                    self.buf.drain(..at);
                    self.resync = false;
                }
                None => {
                    // Keep what could be the start of a split key.
                    let keep = (KEY.len() - 1).min(self.buf.len());
                    self.buf.drain(..self.buf.len() - keep);
                    return None;
                }
            }
        }
        // Blank lines between messages are tolerated silently.
        let lead = self
            .buf
            .iter()
            .take_while(|b| **b == b'\r' || **b == b'\n')
            .count();
        self.buf.drain(..lead);
        if self.buf.is_empty() {
            return None;
        }
        let window = &self.buf[..self.buf.len().min(MAX_HEADER + 4)];
        let Some(end) = window.windows(4).position(|w| w == b"\r\n\r\n") else {
            if self.buf.len() > MAX_HEADER {
                self.buf.drain(..1);
                self.resync = true;
                return Some(Event::Bad("header too long or not terminated"));
            }
            return None;
        };
        let header = parse_header(&self.buf[..end]);
        let body_start = end + 4;
        match header {
            Ok(len) if len > MAX_BODY => {
                self.buf.drain(..body_start);
                self.skip = len;
                Some(Event::Bad("message too large"))
            }
            Ok(len) => {
                if self.buf.len() < body_start + len {
                    return None;
                }
                let body = self.buf[body_start..body_start + len].to_vec();
                self.buf.drain(..body_start + len);
                Some(Event::Body(body))
            }
            Err(Some(len)) => {
                // The length is known: the body is skipped with its header.
                self.buf.drain(..body_start);
                self.skip = len;
                Some(Event::Bad("malformed header"))
            }
            Err(None) => {
                self.buf.drain(..1);
                self.resync = true;
                Some(Event::Bad("malformed header"))
            }
        }
    }
}

fn find_key(buf: &[u8]) -> Option<usize> {
    buf.windows(KEY.len())
        .position(|w| w.eq_ignore_ascii_case(KEY))
}

/// The body length a header block declares. `Err(Some(len))`: the block is
/// malformed but declares a length; `Err(None)`: no usable length.
fn parse_header(block: &[u8]) -> Result<usize, Option<usize>> {
    let mut length: Option<usize> = None;
    let mut bad = false;
    for line in block.split(|b| *b == b'\n') {
        let line = line.strip_suffix(b"\r").unwrap_or(line);
        let Some(colon) = line.iter().position(|b| *b == b':') else {
            bad = true;
            continue;
        };
        let (name, value) = (&line[..colon], &line[colon + 1..]);
        if !name.iter().all(|b| b.is_ascii_graphic()) || name.is_empty() {
            bad = true;
            continue;
        }
        if name.eq_ignore_ascii_case(b"content-length") {
            let parsed = std::str::from_utf8(value)
                .ok()
                .and_then(|v| v.trim().parse::<usize>().ok());
            match (parsed, length) {
                (Some(n), None) => length = Some(n),
                (Some(n), Some(m)) if n == m => {}
                _ => bad = true,
            }
        }
        // Content-Type and unknown headers are accepted and ignored: the
        // body is always UTF-8 JSON in this protocol version.
    }
    match (bad, length) {
        (false, Some(n)) => Ok(n),
        (_, n) => Err(n),
    }
}

/// A JSON-RPC error response.
pub fn error_response(id: Value, code: i64, message: &str) -> Value {
    json!({"jsonrpc": "2.0", "id": id, "error": {"code": code, "message": message}})
}

/// A body that `tower-lsp` can take, as bytes; or the error response that
/// refuses it.
pub fn validate(body: &[u8]) -> Result<Vec<u8>, Value> {
    let value: Value = serde_json::from_slice(body)
        .map_err(|e| error_response(Value::Null, PARSE_ERROR, &format!("Parse error: {e}")))?;
    let refuse = |id: Value, why: &str| {
        error_response(id, INVALID_REQUEST, &format!("Invalid request: {why}"))
    };
    let m = match &value {
        Value::Object(m) => m,
        Value::Array(_) => return Err(refuse(Value::Null, "batches are not supported")),
        _ => return Err(refuse(Value::Null, "a message is a JSON object")),
    };
    let id = m.get("id");
    let id_ok = match id {
        None | Some(Value::String(_)) => true,
        Some(Value::Number(n)) => n.as_i64().is_some(),
        _ => false,
    };
    let reply_id = if id_ok {
        id.cloned().unwrap_or(Value::Null)
    } else {
        Value::Null
    };
    if m.get("jsonrpc").and_then(Value::as_str) != Some("2.0") {
        return Err(refuse(reply_id, "\"jsonrpc\" must be \"2.0\""));
    }
    match m.get("method") {
        Some(Value::String(_)) => {
            if !id_ok {
                return Err(refuse(reply_id, "an id is an integer or a string"));
            }
            if m.contains_key("result") || m.contains_key("error") {
                return Err(refuse(reply_id, "a request has no result or error"));
            }
            if !matches!(
                m.get("params"),
                None | Some(Value::Object(_) | Value::Array(_) | Value::Null)
            ) {
                return Err(refuse(reply_id, "params are an object or an array"));
            }
        }
        Some(_) => return Err(refuse(reply_id, "method must be a string")),
        None => {
            // A response to one of the server's requests: `null` is a valid
            // id here (the client could not read the request's).
            let response_id_ok = id_ok && id.is_some() || id == Some(&Value::Null);
            if !response_id_ok || m.contains_key("result") == m.contains_key("error") {
                return Err(refuse(reply_id, "neither a request nor a response"));
            }
            if serde_json::from_value::<tower_lsp::jsonrpc::Response>(value.clone()).is_err() {
                return Err(refuse(reply_id, "malformed response"));
            }
        }
    }
    // Written again from the value: duplicate keys, which `tower-lsp`'s
    // typed decoding refuses, are resolved here as the checks saw them.
    serde_json::to_vec(&value).map_err(|e| error_response(reply_id, PARSE_ERROR, &e.to_string()))
}

/// One message framed for the wire.
pub fn frame(body: &[u8]) -> Vec<u8> {
    let mut out = format!("Content-Length: {}\r\n\r\n", body.len()).into_bytes();
    out.extend_from_slice(body);
    out
}

/// Read the client's messages from `input`: valid ones go framed to
/// `server` (`tower-lsp`'s input), refusals to `replies`. Returns at the
/// end of the input or when `tower-lsp` stops reading.
pub async fn read_in<R, W>(input: R, mut server: W, replies: mpsc::Sender<Vec<u8>>)
where
    R: AsyncRead + Unpin,
    W: AsyncWrite + Unpin,
{
    let mut frames = Frames::new(input);
    while let Some(event) = frames.next().await {
        let reply = match event {
            Event::Body(body) => match validate(&body) {
                Ok(body) => {
                    if server.write_all(&frame(&body)).await.is_err() {
                        return;
                    }
                    continue;
                }
                Err(reply) => reply,
            },
            Event::Bad(why) => {
                error_response(Value::Null, PARSE_ERROR, &format!("Parse error: {why}"))
            }
        };
        let bytes = frame(&serde_json::to_vec(&reply).unwrap_or_default());
        if replies.send(bytes).await.is_err() {
            return;
        }
    }
    let _ = server.shutdown().await;
}

/// The only writer of `output`: `tower-lsp`'s frames from `server`, whole,
/// and the refusals from `replies`. Returns when both have ended or the
/// output fails.
pub async fn write_out<R, O>(server: R, mut replies: mpsc::Receiver<Vec<u8>>, output: O)
where
    R: AsyncRead + Unpin,
    O: AsyncWrite,
{
    tokio::pin!(output);
    let mut frames = Frames::new(server);
    let (mut server_open, mut replies_open) = (true, true);
    while server_open || replies_open {
        let bytes = tokio::select! {
            ev = frames.next(), if server_open => match ev {
                Some(Event::Body(body)) => frame(&body),
                Some(Event::Bad(_)) => continue,
                None => { server_open = false; continue; }
            },
            r = replies.recv(), if replies_open => match r {
                Some(bytes) => bytes,
                None => { replies_open = false; continue; }
            },
        };
        if output.write_all(&bytes).await.is_err() || output.flush().await.is_err() {
            return;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    async fn events(input: &[u8]) -> Vec<Event> {
        let mut frames = Frames::new(input);
        let mut out = Vec::new();
        while let Some(ev) = frames.next().await {
            out.push(ev);
        }
        out
    }

    fn body(s: &str) -> Event {
        Event::Body(s.as_bytes().to_vec())
    }

    #[tokio::test]
    async fn frames_are_split_by_their_length() {
        let got =
            events(b"Content-Length: 2\r\n\r\n{}content-length:3\r\nContent-Type: x\r\n\r\n[1]")
                .await;
        assert_eq!(got, vec![body("{}"), body("[1]")]);
    }

    #[tokio::test]
    async fn a_bad_header_with_a_length_skips_its_body() {
        let got =
            events(b"Content-Length: 2\r\nnonsense\r\n\r\n{}Content-Length: 2\r\n\r\n[]").await;
        assert_eq!(got, vec![Event::Bad("malformed header"), body("[]")]);
    }

    #[tokio::test]
    async fn garbage_is_skipped_to_the_next_header() {
        let got =
            events(b"hello there\r\n\r\n{\"x\":1} more junk Content-Length: 2\r\n\r\n{}").await;
        assert_eq!(got, vec![Event::Bad("malformed header"), body("{}")]);
        let got = events(b"Content-Length: x\r\n\r\n{}Content-Length: 2\r\n\r\n{}").await;
        assert_eq!(got, vec![Event::Bad("malformed header"), body("{}")]);
    }

    #[tokio::test]
    async fn an_endless_header_is_refused_once() {
        let mut input = vec![b'a'; 100_000];
        input.extend_from_slice(b"Content-Length: 2\r\n\r\n{}");
        let got = events(&input).await;
        assert_eq!(
            got,
            vec![Event::Bad("header too long or not terminated"), body("{}")]
        );
    }

    #[test]
    fn validation_follows_json_rpc() {
        let code = |s: &str| {
            validate(s.as_bytes())
                .err()
                .map(|e| (e["error"]["code"].as_i64(), e["id"].clone()))
        };
        assert_eq!(code(r#"{"jsonrpc":"2.0","id":1,"method":"x"}"#), None);
        assert_eq!(code(r#"{"jsonrpc":"2.0","id":"a","result":null}"#), None);
        assert_eq!(
            code(r#"{"jsonrpc":"2.0","id":null,"error":{"code":1,"message":"m"}}"#),
            None
        );
        assert_eq!(code("{"), Some((Some(PARSE_ERROR), Value::Null)));
        assert_eq!(code("[]"), Some((Some(INVALID_REQUEST), Value::Null)));
        assert_eq!(code("3"), Some((Some(INVALID_REQUEST), Value::Null)));
        assert_eq!(
            code(r#"{"id":4,"method":"x"}"#),
            Some((Some(INVALID_REQUEST), json!(4)))
        );
        assert_eq!(
            code(r#"{"jsonrpc":"1.0","id":"s","method":"x"}"#),
            Some((Some(INVALID_REQUEST), json!("s")))
        );
        for id in ["{}", "1.5", "1180591620717411303424", "null", "[1]"] {
            let msg = format!(r#"{{"jsonrpc":"2.0","id":{id},"method":"x"}}"#);
            assert_eq!(
                code(&msg),
                Some((Some(INVALID_REQUEST), Value::Null)),
                "{msg}"
            );
        }
        assert_eq!(
            code(r#"{"jsonrpc":"2.0","id":1}"#),
            Some((Some(INVALID_REQUEST), json!(1)))
        );
        assert_eq!(
            code(r#"{"jsonrpc":"2.0","method":"x","params":3}"#),
            Some((Some(INVALID_REQUEST), Value::Null))
        );
    }
}
