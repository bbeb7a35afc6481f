//! A small WebDriver client for Debian's `chromium-driver` (chromedriver):
//! a session with headless Chromium, navigate, run a script, take a
//! screenshot, end the session. The W3C WebDriver protocol
//! (<https://www.w3.org/TR/webdriver2/>) is JSON over HTTP/1.1; one
//! request per connection over std's `TcpStream`, so no HTTP library.

use serde_json::{json, Value};
use std::io::{Read, Write};
use std::net::{Ipv4Addr, TcpListener, TcpStream};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::sync::OnceLock;
use std::time::{Duration, Instant};

/// How long chromedriver may take to start, and any one command.
const PATIENCE: Duration = Duration::from_secs(60);

/// Why a WebDriver step failed.
#[derive(Debug, thiserror::Error)]
pub enum WebDriverError {
    /// Talking to chromedriver failed.
    #[error("{what}: {source}")]
    Io {
        /// What was being done.
        what: String,
        /// The operating system's error.
        source: std::io::Error,
    },
    /// chromedriver's answer is not HTTP with a JSON body.
    #[error("chromedriver's answer is not the JSON expected: {0}")]
    Answer(String),
    /// chromedriver refused the command (a WebDriver error code).
    #[error("chromedriver: {error}: {message}")]
    Command {
        /// The WebDriver error code, e.g. `javascript error`.
        error: String,
        /// Its message.
        message: String,
    },
    /// chromedriver did not come up.
    #[error("chromedriver did not answer on port {0} within 60 s")]
    NotReady(u16),
    /// A screenshot's base64 is broken.
    #[error("the screenshot is not base64")]
    Base64,
}

/// The chromedriver binary: `PLETHWIRE_CHROMEDRIVER`, else `chromedriver`
/// from `PATH`, if it answers `--version`.
pub fn chromedriver() -> Option<PathBuf> {
    static FOUND: OnceLock<Option<PathBuf>> = OnceLock::new();
    FOUND
        .get_or_init(|| {
            let candidates = std::env::var_os("PLETHWIRE_CHROMEDRIVER")
                .into_iter()
                .chain(["chromedriver".into()]);
            candidates.map(PathBuf::from).find(|exe| {
                Command::new(exe)
                    .arg("--version")
                    .stdin(Stdio::null())
                    .stdout(Stdio::null())
                    .stderr(Stdio::null())
                    .status()
                    .is_ok_and(|s| s.success())
            })
        })
        .clone()
}

/// A running chromedriver on a port of its own.
#[derive(Debug)]
pub struct Driver {
    child: Child,
    port: u16,
}

/// One browser session.
#[derive(Debug)]
pub struct Browser {
    driver: Driver,
    id: String,
    // The profile folder, removed with the session.
    _profile: tempfile::TempDir,
}

fn io(what: &str) -> impl FnOnce(std::io::Error) -> WebDriverError + '_ {
    move |source| WebDriverError::Io {
        what: what.to_owned(),
        source,
    }
}

/// The body of a chunked HTTP/1.1 message (RFC 9112 §7.1).
fn unchunked(mut rest: &[u8]) -> Result<Vec<u8>, WebDriverError> {
    let mut body = Vec::new();
    let broken = || WebDriverError::Answer("broken chunked body".into());
    loop {
        let at = rest
            .windows(2)
            .position(|w| w == b"\r\n")
            .ok_or_else(broken)?;
        let size_text = std::str::from_utf8(&rest[..at]).map_err(|_| broken())?;
        let size_text = size_text.split(';').next().unwrap_or("").trim();
        let size = usize::from_str_radix(size_text, 16).map_err(|_| broken())?;
        rest = &rest[at + 2..];
        if size == 0 {
            return Ok(body);
        }
        body.extend_from_slice(rest.get(..size).ok_or_else(broken)?);
        rest = rest.get(size + 2..).ok_or_else(broken)?;
    }
}

/// Where the headers of `raw` end (after the blank line), if they have.
fn headers_end(raw: &[u8]) -> Option<usize> {
    raw.windows(4)
        .position(|w| w == b"\r\n\r\n")
        .map(|at| at + 4)
}

/// The value of header `name` (lower case) in `head`.
fn header<'a>(head: &'a str, name: &str) -> Option<&'a str> {
    head.lines().find_map(|l| {
        let (key, value) = l.split_once(':')?;
        (key.trim().eq_ignore_ascii_case(name)).then(|| value.trim())
    })
}

/// Whether `raw` holds a whole response: its body as long as its
/// Content-Length, or its last chunk.
fn complete(raw: &[u8]) -> bool {
    let Some(end) = headers_end(raw) else {
        return false;
    };
    let head = String::from_utf8_lossy(&raw[..end]);
    match header(&head, "content-length").and_then(|n| n.parse::<usize>().ok()) {
        Some(n) => raw.len() >= end + n,
        None => raw.ends_with(b"0\r\n\r\n"),
    }
}

/// The JSON body of a whole HTTP response.
fn response_json(raw: &[u8]) -> Result<Value, WebDriverError> {
    let end = headers_end(raw).ok_or_else(|| WebDriverError::Answer("no end of headers".into()))?;
    let head = String::from_utf8_lossy(&raw[..end]);
    let rest = &raw[end..];
    let body = match header(&head, "transfer-encoding") {
        Some(t) if t.eq_ignore_ascii_case("chunked") => unchunked(rest)?,
        _ => match header(&head, "content-length").and_then(|n| n.parse::<usize>().ok()) {
            Some(n) => rest.get(..n).unwrap_or(rest).to_vec(),
            None => rest.to_vec(),
        },
    };
    serde_json::from_slice(&body).map_err(|e| WebDriverError::Answer(e.to_string()))
}

impl Driver {
    /// Start `exe` on a free port and wait until it says it is ready.
    pub fn start(exe: &Path) -> Result<Self, WebDriverError> {
        let port = TcpListener::bind((Ipv4Addr::LOCALHOST, 0))
            .and_then(|l| l.local_addr())
            .map_err(io("cannot find a free port"))?
            .port();
        let child = Command::new(exe)
            .arg(format!("--port={port}"))
            .stdin(Stdio::null())
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .map_err(io("cannot start chromedriver"))?;
        let driver = Self { child, port };
        let deadline = Instant::now() + PATIENCE;
        loop {
            let ready = driver.call("GET", "/status", None);
            if ready.is_ok_and(|v| v["ready"] == json!(true)) {
                return Ok(driver);
            }
            if Instant::now() > deadline {
                return Err(WebDriverError::NotReady(port));
            }
            std::thread::sleep(Duration::from_millis(100));
        }
    }

    /// One command: `method path` with `body`; the answer's `value`.
    pub fn call(
        &self,
        method: &str,
        path: &str,
        body: Option<&Value>,
    ) -> Result<Value, WebDriverError> {
        let mut stream = TcpStream::connect((Ipv4Addr::LOCALHOST, self.port))
            .map_err(io("cannot reach chromedriver"))?;
        stream
            .set_read_timeout(Some(PATIENCE))
            .map_err(io("cannot set a timeout"))?;
        let body = body.map(Value::to_string).unwrap_or_default();
        let request = format!(
            "{method} {path} HTTP/1.1\r\nHost: 127.0.0.1:{}\r\nContent-Type: application/json\r\n\
             Content-Length: {}\r\nConnection: close\r\n\r\n{body}",
            self.port,
            body.len()
        );
        stream
            .write_all(request.as_bytes())
            .map_err(io("cannot send to chromedriver"))?;
        // chromedriver may keep the connection open: read until the
        // answer is whole, not until the connection ends.
        let mut raw = Vec::new();
        let mut buf = [0u8; 16 * 1024];
        while !complete(&raw) {
            let n = stream
                .read(&mut buf)
                .map_err(io("cannot read chromedriver's answer"))?;
            if n == 0 {
                break;
            }
            raw.extend_from_slice(&buf[..n]);
        }
        let mut answer = response_json(&raw)?;
        let value = answer["value"].take();
        if let Some(error) = value.get("error").and_then(Value::as_str) {
            return Err(WebDriverError::Command {
                error: error.to_owned(),
                message: value["message"].as_str().unwrap_or("").to_owned(),
            });
        }
        Ok(value)
    }
}

impl Drop for Driver {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

/// `exe` as a path chromedriver can start: a bare name is looked up in
/// the folders of `PATH`.
fn full_path(exe: &Path) -> PathBuf {
    if exe.components().count() > 1 {
        return exe.to_path_buf();
    }
    std::env::var_os("PATH")
        .and_then(|path| {
            std::env::split_paths(&path)
                .map(|dir| dir.join(exe))
                .find(|candidate| candidate.is_file())
        })
        .unwrap_or_else(|| exe.to_path_buf())
}

impl Browser {
    /// A session with headless Chromium (`chromium`, e.g.
    /// [`crate::browser::chromium`]) in a window of `size` px, driven by
    /// the chromedriver `driver`.
    pub fn open(driver: &Path, chromium: &Path, size: (u32, u32)) -> Result<Self, WebDriverError> {
        let driver = Driver::start(driver)?;
        let profile = tempfile::tempdir().map_err(io("cannot make a profile folder"))?;
        let caps = json!({"capabilities": {"alwaysMatch": {
            "browserName": "chrome",
            "goog:chromeOptions": {
                "binary": full_path(chromium).display().to_string(),
                "args": [
                    "--headless", "--no-sandbox", "--disable-gpu", "--hide-scrollbars",
                    format!("--window-size={},{}", size.0, size.1),
                    format!("--user-data-dir={}", profile.path().display()),
                ],
            },
        }}});
        let value = driver.call("POST", "/session", Some(&caps))?;
        let id = value["sessionId"]
            .as_str()
            .ok_or_else(|| WebDriverError::Answer(format!("no session id in {value}")))?
            .to_owned();
        Ok(Self {
            driver,
            id,
            _profile: profile,
        })
    }

    fn session_call(
        &self,
        method: &str,
        what: &str,
        body: Option<&Value>,
    ) -> Result<Value, WebDriverError> {
        let path = format!("/session/{}{what}", self.id);
        self.driver.call(method, &path, body)
    }

    /// Load `url` (returns once the page has loaded).
    pub fn navigate(&self, url: &str) -> Result<(), WebDriverError> {
        self.session_call("POST", "/url", Some(&json!({ "url": url })))
            .map(|_| ())
    }

    /// Run `script` (a function body; `arguments[i]` are `args`) in the
    /// page; what it returns.
    pub fn execute(&self, script: &str, args: &[Value]) -> Result<Value, WebDriverError> {
        self.session_call(
            "POST",
            "/execute/sync",
            Some(&json!({ "script": script, "args": args })),
        )
    }

    /// The visible page as PNG bytes.
    pub fn screenshot(&self) -> Result<Vec<u8>, WebDriverError> {
        let value = self.session_call("GET", "/screenshot", None)?;
        let text = value
            .as_str()
            .ok_or_else(|| WebDriverError::Answer("the screenshot is no string".into()))?;
        base64_decoded(text).ok_or(WebDriverError::Base64)
    }

    /// End the session (the browser closes); also done on drop.
    pub fn close(mut self) -> Result<(), WebDriverError> {
        let id = std::mem::take(&mut self.id);
        self.driver
            .call("DELETE", &format!("/session/{id}"), None)
            .map(|_| ())
    }
}

impl Drop for Browser {
    fn drop(&mut self) {
        if !self.id.is_empty() {
            let _ = self
                .driver
                .call("DELETE", &format!("/session/{}", self.id), None);
        }
    }
}

/// Standard base64 (RFC 4648 §4) decoded; `None` when it is not.
pub fn base64_decoded(text: &str) -> Option<Vec<u8>> {
    let value = |c: u8| -> Option<u32> {
        Some(match c {
            b'A'..=b'Z' => c - b'A',
            b'a'..=b'z' => c - b'a' + 26,
            b'0'..=b'9' => c - b'0' + 52,
            b'+' => 62,
            b'/' => 63,
            _ => return None,
        } as u32)
    };
    let bytes: Vec<u8> = text.bytes().filter(|c| !c.is_ascii_whitespace()).collect();
    let body = bytes
        .strip_suffix(b"==")
        .or_else(|| bytes.strip_suffix(b"="))
        .unwrap_or(&bytes);
    if bytes.len() % 4 != 0 {
        return None;
    }
    let mut out = Vec::with_capacity(body.len() * 3 / 4);
    for group in body.chunks(4) {
        let mut n = 0u32;
        for &c in group {
            n = n << 6 | value(c)?;
        }
        n <<= 6 * (4 - group.len() as u32);
        let got = [(n >> 16) as u8, (n >> 8) as u8, n as u8];
        out.extend_from_slice(&got[..group.len() - 1]);
    }
    Some(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn base64_decodes_the_rfc_4648_test_vectors() {
        // RFC 4648 §10.
        for (text, plain) in [
            ("", ""),
            ("Zg==", "f"),
            ("Zm8=", "fo"),
            ("Zm9v", "foo"),
            ("Zm9vYg==", "foob"),
            ("Zm9vYmE=", "fooba"),
            ("Zm9vYmFy", "foobar"),
        ] {
            assert_eq!(base64_decoded(text).unwrap(), plain.as_bytes(), "{text}");
        }
        assert_eq!(base64_decoded("Zm9"), None);
        assert_eq!(base64_decoded("Zm9*"), None);
    }

    #[test]
    fn http_bodies_are_read_plain_and_chunked() {
        let plain = b"HTTP/1.1 200 OK\r\nContent-Length: 13\r\n\r\n{\"value\":1.5}";
        assert_eq!(response_json(plain).unwrap(), json!({"value": 1.5}));
        let chunked =
            b"HTTP/1.1 200 OK\r\nTransfer-Encoding: chunked\r\n\r\n5\r\n{\"val\r\n8;x=y\r\nue\":[2]}\r\n0\r\n\r\n";
        assert_eq!(response_json(chunked).unwrap(), json!({"value": [2]}));
        assert!(response_json(b"HTTP/1.1 200 OK\r\n").is_err());
        assert!(complete(plain) && complete(chunked));
        assert!(!complete(&plain[..plain.len() - 1]));
        assert!(!complete(&chunked[..chunked.len() - 3]));
        let unspaced = b"HTTP/1.1 200 OK\r\nContent-Length:2\r\n\r\n{}";
        assert_eq!(response_json(unspaced).unwrap(), json!({}));
        assert!(unchunked(b"zz\r\n").is_err());
    }
}
