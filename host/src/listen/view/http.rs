//! Just enough HTTP/1.1 for one page and one event stream: read a
//! request head, say where it goes, write a whole response.

use std::io::{self, Read, Write};

/// Longest request head read; a browser's is well under this.
const MAX_HEAD: usize = 8 * 1024;

/// Where a request goes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Route {
    /// `GET /`: the page.
    Page,
    /// `GET /events`: the event stream.
    Events,
    /// A GET of anything else.
    NotFound,
    /// Another method.
    NotAllowed,
    /// A `Host` that is not this server by its loopback name (a page of
    /// another site reaching us through a rebound name).
    ForeignHost,
    /// Not a request line we can read.
    Bad,
}

/// Reads one request head from `r` and routes it; `port` is the port we
/// serve on, for the `Host` check.
pub fn read_route(r: &mut impl Read, port: u16) -> io::Result<Route> {
    let mut head = Vec::with_capacity(1024);
    let mut buf = [0u8; 1024];
    while !head.windows(4).any(|w| w == b"\r\n\r\n") {
        let n = r.read(&mut buf)?;
        if n == 0 || head.len() + n > MAX_HEAD {
            return Ok(Route::Bad);
        }
        head.extend_from_slice(&buf[..n]);
    }
    Ok(route(&String::from_utf8_lossy(&head), port))
}

/// Routes a request head (request line and headers).
pub fn route(head: &str, port: u16) -> Route {
    let mut lines = head.split("\r\n");
    let mut parts = lines.next().unwrap_or("").split(' ');
    let (Some(method), Some(target), Some(version)) = (parts.next(), parts.next(), parts.next())
    else {
        return Route::Bad;
    };
    if !version.starts_with("HTTP/1.") || !target.starts_with('/') {
        return Route::Bad;
    }
    let host = lines
        .filter_map(|l| l.split_once(':'))
        .find(|(name, _)| name.trim().eq_ignore_ascii_case("host"))
        .map(|(_, value)| value.trim().to_ascii_lowercase());
    let ours = [format!("127.0.0.1:{port}"), format!("localhost:{port}")];
    if host.is_some_and(|h| !ours.contains(&h)) {
        return Route::ForeignHost;
    }
    if method != "GET" {
        return Route::NotAllowed;
    }
    match target.split('?').next() {
        Some("/") => Route::Page,
        Some("/events") => Route::Events,
        _ => Route::NotFound,
    }
}

/// Only what the page itself holds may run or load: no other site, no
/// network but our own event stream.
const PAGE_POLICY: &str = "default-src 'none'; script-src 'unsafe-inline'; \
    style-src 'unsafe-inline'; connect-src 'self'; img-src 'self' data:; \
    base-uri 'none'; form-action 'none'; frame-ancestors 'none'";

/// Writes the page.
pub fn page(w: &mut impl Write, html: &str) -> io::Result<()> {
    let extra = format!("Content-Security-Policy: {PAGE_POLICY}\r\n");
    whole(w, "200 OK", "text/html; charset=utf-8", &extra, html)
}

/// Writes the head of the event stream; the events follow until the
/// connection closes.
pub fn events_head(w: &mut impl Write) -> io::Result<()> {
    w.write_all(
        b"HTTP/1.1 200 OK\r\nContent-Type: text/event-stream\r\n\
          Cache-Control: no-store\r\nConnection: close\r\n\
          X-Content-Type-Options: nosniff\r\n\r\n\
          retry: 1000\n\n",
    )?;
    w.flush()
}

/// Writes the refusal for `route` (anything but the page and the stream).
pub fn refusal(w: &mut impl Write, route: Route) -> io::Result<()> {
    let (status, extra, text) = match route {
        Route::NotAllowed => (
            "405 Method Not Allowed",
            "Allow: GET\r\n",
            "plethwire live view: only GET is served here.",
        ),
        Route::ForeignHost => (
            "403 Forbidden",
            "",
            "plethwire live view: open it as http://127.0.0.1:PORT/ on this computer.",
        ),
        Route::Bad => ("400 Bad Request", "", "plethwire live view: not a request."),
        _ => (
            "404 Not Found",
            "",
            "plethwire live view: there is the page at / and its events at /events, nothing else.",
        ),
    };
    whole(
        w,
        status,
        "text/plain; charset=utf-8",
        extra,
        &format!("{text}\n"),
    )
}

/// Writes the refusal of one more stream than we serve.
pub fn busy(w: &mut impl Write) -> io::Result<()> {
    whole(
        w,
        "503 Service Unavailable",
        "text/plain; charset=utf-8",
        "Retry-After: 5\r\n",
        "plethwire live view: too many pages are open; close one.\n",
    )
}

fn whole(w: &mut impl Write, status: &str, kind: &str, extra: &str, body: &str) -> io::Result<()> {
    let head = format!(
        "HTTP/1.1 {status}\r\nContent-Type: {kind}\r\nContent-Length: {}\r\n\
         Cache-Control: no-store\r\nConnection: close\r\nX-Content-Type-Options: nosniff\r\n\
         {extra}\r\n",
        body.len()
    );
    w.write_all(head.as_bytes())?;
    w.write_all(body.as_bytes())?;
    w.flush()
}
