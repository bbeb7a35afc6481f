//! The WebDriver client (`plethwire_checks::webdriver`) against
//! Debian's chromedriver and headless Chromium, on a tiny page of this
//! test's own served by a std `TcpListener`: a script on the page changes
//! an attribute after loading, the client reads it back, passes
//! arguments, sees a script error as an error, and takes a screenshot
//! whose PNG header (PNG specification, ISO/IEC 15948 §5.2 signature and
//! §11.2.2 IHDR) gives the window's width.

use plethwire_checks::browser::chromium;
use plethwire_checks::webdriver::{chromedriver, Browser, WebDriverError};
use plethwire_checks::{need, needs};
use serde_json::json;
use std::io::{BufRead, BufReader, Write};
use std::net::{Ipv4Addr, TcpListener};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::Arc;

const PAGE: &str = r#"<!DOCTYPE html><html><head><meta charset="utf-8"><title>t</title></head>
<body style="background:#fff"><p id="x" data-n="3">hello</p>
<script>document.getElementById('x').dataset.n = String(3 + 4);</script></body></html>"#;

/// Serve `PAGE` to every request on a free port; the port and a count
/// of requests answered.
fn serve() -> (u16, Arc<AtomicUsize>) {
    let listener = TcpListener::bind((Ipv4Addr::LOCALHOST, 0)).unwrap();
    let port = listener.local_addr().unwrap().port();
    let served = Arc::new(AtomicUsize::new(0));
    let count = served.clone();
    std::thread::spawn(move || {
        for stream in listener.incoming() {
            let Ok(mut stream) = stream else { continue };
            let mut reader = BufReader::new(stream.try_clone().unwrap());
            let mut line = String::new();
            // The request line and headers, up to the blank line.
            while reader.read_line(&mut line).is_ok_and(|n| n > 0) && line != "\r\n" {
                line.clear();
            }
            let answer = format!(
                "HTTP/1.1 200 OK\r\nContent-Type: text/html; charset=utf-8\r\n\
                 Content-Length: {}\r\nConnection: close\r\n\r\n{PAGE}",
                PAGE.len()
            );
            let _ = stream.write_all(answer.as_bytes());
            count.fetch_add(1, Ordering::SeqCst);
        }
    });
    (port, served)
}

#[test]
fn the_client_drives_headless_chromium_on_a_page_of_our_own() {
    let Some(browser_exe) = chromium() else {
        need(needs::CHROMIUM, false);
        return;
    };
    let Some(driver) = chromedriver() else {
        need(needs::CHROMEDRIVER, false);
        return;
    };
    let (port, served) = serve();
    let browser = Browser::open(&driver, &browser_exe, (640, 480)).expect("a session");
    browser
        .navigate(&format!("http://127.0.0.1:{port}/"))
        .unwrap();
    assert!(served.load(Ordering::SeqCst) >= 1, "the page was fetched");
    let n = browser
        .execute("return document.getElementById('x').dataset.n;", &[])
        .unwrap();
    assert_eq!(n, json!("7"), "the page's own script ran");
    let text = browser
        .execute(
            "return document.getElementById('x').textContent + arguments[0] * 2;",
            &[json!(21)],
        )
        .unwrap();
    assert_eq!(text, json!("hello42"));
    let e = browser
        .execute("throw new Error('on purpose');", &[])
        .unwrap_err();
    assert!(
        matches!(&e, WebDriverError::Command { error, message }
            if error == "javascript error" && message.contains("on purpose")),
        "{e}"
    );
    let png = browser.screenshot().unwrap();
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n", "PNG signature");
    assert_eq!(&png[12..16], b"IHDR");
    let width = u32::from_be_bytes(png[16..20].try_into().unwrap());
    let height = u32::from_be_bytes(png[20..24].try_into().unwrap());
    assert!(width > 0 && height > 0 && width <= 640, "{width}x{height}");
    browser.close().unwrap();
}
