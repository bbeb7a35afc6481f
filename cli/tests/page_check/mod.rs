//! Reading a `plethwire report` page back: parse it strictly as XML, check
//! that it is self-contained and complete, and collect its marked figures.
#![allow(dead_code)] // each test file uses a different subset

use std::collections::BTreeMap;

/// Section ids a page may have, in order; all but the score are on every
/// page.
pub const SECTIONS: [&str; 8] = [
    "excerpt",
    "heart-rate",
    "intervals",
    "poincare",
    "quality",
    "hrv",
    "filter",
    "score",
];

/// One `data-figure` element: its text and its exact value.
#[derive(Debug, Clone, PartialEq)]
pub struct Shown {
    /// What the reader sees.
    pub text: String,
    /// `data-value` parsed; `None` when empty or absent (text figures).
    pub value: Option<f64>,
}

/// A parsed page.
pub struct Page {
    /// Every marked figure by name.
    pub figures: BTreeMap<String, Shown>,
    /// Inline SVG figures per section id, as markup.
    pub svgs: BTreeMap<String, Vec<String>>,
    /// The ids of the sections on the page, in order.
    pub sections: Vec<String>,
    /// The figures shown in the header's cards.
    pub cards: Vec<String>,
}

impl Page {
    /// The figure `name`, which must be on the page.
    pub fn get(&self, name: &str) -> &Shown {
        self.figures
            .get(name)
            .unwrap_or_else(|| panic!("no figure '{name}' on the page"))
    }

    /// Assert that figure `name` holds exactly `expected` and shows it to
    /// `decimals` places (or a dash when there is none).
    pub fn assert_figure(&self, name: &str, expected: Option<f64>, decimals: usize) {
        let shown = self.get(name);
        assert_eq!(shown.value, expected, "figure {name}");
        match expected {
            Some(v) => {
                let text: f64 = shown
                    .text
                    .parse()
                    .unwrap_or_else(|_| panic!("{name}: '{}' is not a number", shown.text));
                let half = 0.5 * 10f64.powi(-(decimals as i32));
                assert!(
                    (text - v).abs() <= half * (1.0 + 1e-9),
                    "{name}: shows {text}, value {v}"
                );
                let places = shown.text.split('.').nth(1).map_or(0, str::len);
                assert_eq!(places, decimals, "{name}: '{}'", shown.text);
            }
            None => assert_eq!(shown.text, "–", "{name}"),
        }
    }
}

impl Page {
    /// As [`Page::assert_figure`] when `expected` holds a value; when it
    /// does not, the figure must be missing or shown as a dash (a score
    /// row is left out when its reference is).
    pub fn assert_figure_if(&self, name: &str, expected: Option<f64>, decimals: usize) {
        match (expected, self.figures.get(name)) {
            (None, None) => {}
            _ => self.assert_figure(name, expected, decimals),
        }
    }
}

fn text_of(node: roxmltree::Node<'_, '_>) -> String {
    node.descendants()
        .filter(|n| n.is_text())
        .filter_map(|n| n.text())
        .collect()
}

/// Parse `html` (it must be well-formed XML), check that it fetches
/// nothing, runs nothing, has every section and the cautions, and collect
/// its figures.
pub fn read(html: &str) -> Page {
    assert!(html.starts_with("<!DOCTYPE html>\n"), "HTML5 doctype first");
    let lower = html.to_ascii_lowercase();
    for banned in [
        "http", "<script", "url(", "@import", "<link", "<img", "<iframe",
    ] {
        assert!(!lower.contains(banned), "the page contains '{banned}'");
    }
    let doc = roxmltree::Document::parse_with_options(
        html,
        roxmltree::ParsingOptions {
            allow_dtd: true,
            ..roxmltree::ParsingOptions::default()
        },
    )
    .expect("the page is well-formed XML");
    let root = doc.root_element();
    assert_eq!(root.tag_name().name(), "html");
    for node in doc.descendants().filter(|n| n.is_element()) {
        let name = node.tag_name().name();
        assert!(
            !["script", "image", "object", "embed", "foreignObject"].contains(&name),
            "<{name}> on the page"
        );
        for a in node.attributes() {
            assert!(!a.name().starts_with("on"), "event handler {}", a.name());
            assert_ne!(a.name(), "src", "a src attribute");
            if a.name() == "href" {
                assert!(a.value().starts_with('#'), "link out: {}", a.value());
            }
        }
    }
    let by_id = |id: &str| {
        doc.descendants()
            .find(|n| n.attribute("id") == Some(id))
            .unwrap_or_else(|| panic!("no element with id '{id}'"))
    };
    assert_eq!(by_id("summary").tag_name().name(), "header");
    let mut svgs = BTreeMap::new();
    let mut previous = 0;
    let mut sections = Vec::new();
    for id in SECTIONS {
        let found = doc.descendants().find(|n| n.attribute("id") == Some(id));
        if id == "score" && found.is_none() {
            continue;
        }
        sections.push(id.to_owned());
        let s = by_id(id);
        assert_eq!(s.tag_name().name(), "section", "{id}");
        assert!(s.range().start > previous, "section {id} out of order");
        previous = s.range().start;
        let heading = s.children().find(|c| c.has_tag_name("h2"));
        assert!(
            heading.is_some_and(|h| !text_of(h).is_empty()),
            "{id} has a heading"
        );
        let figures: Vec<String> = s
            .descendants()
            .filter(|n| n.has_tag_name("svg") && n.attribute("role") == Some("img"))
            .map(|n| html[n.range()].to_owned())
            .collect();
        svgs.insert(id.to_owned(), figures);
    }
    // The navigation links to exactly the sections there are, in order.
    let nav: Vec<String> = doc
        .descendants()
        .filter(|n| n.has_tag_name("nav"))
        .flat_map(|n| n.descendants().filter_map(|a| a.attribute("href")))
        .map(|h| h.trim_start_matches('#').to_owned())
        .collect();
    assert_eq!(nav, sections, "the navigation follows the page");
    let cards: Vec<String> = by_id("summary")
        .descendants()
        .filter(|n| n.has_tag_name("dl"))
        .flat_map(|n| n.descendants().filter_map(|c| c.attribute("data-figure")))
        .map(str::to_owned)
        .collect();
    for n in doc
        .descendants()
        .filter(|n| ["p", "li", "dd", "td", "th", "h2", "text"].contains(&n.tag_name().name()))
    {
        assert_eq!(
            split_unit(&text_of(n)),
            None,
            "a number apart from its unit"
        );
    }
    let footer = text_of(by_id("cautions"));
    for caution in [
        "not a medical device",
        "diagnosis",
        "regulations",
        "qualified practice",
    ] {
        assert!(footer.contains(caution), "the cautions mention '{caution}'");
    }
    let mut figures = BTreeMap::new();
    for n in doc
        .descendants()
        .filter(|n| n.attribute("data-figure").is_some())
    {
        let name = n.attribute("data-figure").unwrap().to_owned();
        let value = n
            .attribute("data-value")
            .filter(|v| !v.is_empty())
            .map(|v| v.parse::<f64>().expect("data-value is a number"));
        let shown = Shown {
            text: text_of(n),
            value,
        };
        let before = figures.insert(name.clone(), shown.clone());
        assert!(
            before.is_none_or(|b| b == shown),
            "figure {name} shown twice with different values"
        );
    }
    Page {
        figures,
        svgs,
        sections,
        cards,
    }
}

/// Units that must stay on the line of their number.
const UNITS: [&str; 10] = ["Hz", "dB", "ms", "s", "bpm", "%", "V", "µA", "min", "mV"];

/// A number and a unit after it with a plain (breakable) space between,
/// if `text` has one: `"12 s"`, not `"12\u{a0}s"`.
pub fn split_unit(text: &str) -> Option<String> {
    let chars: Vec<char> = text.chars().collect();
    (1..chars.len()).find_map(|i| {
        if !(chars[i].is_whitespace() && chars[i] != '\u{a0}' && chars[i - 1].is_ascii_digit()) {
            return None;
        }
        let rest: String = chars[i + 1..].iter().collect();
        let word: String = rest
            .chars()
            .take_while(|c| c.is_alphabetic() || *c == '%')
            .collect();
        let word = if word.starts_with('%') {
            "%".to_owned()
        } else {
            word
        };
        UNITS.contains(&word.as_str()).then(|| {
            chars[i.saturating_sub(8)..(i + 4).min(chars.len())]
                .iter()
                .collect()
        })
    })
}
