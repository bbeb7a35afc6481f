//! Reading a `plethwire report` page back: parse it strictly as XML, check
//! that it is self-contained and complete, and collect its marked figures.
#![allow(dead_code)] // each test file uses a different subset

use std::collections::BTreeMap;

/// Section ids every page has, in order.
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
    for id in SECTIONS {
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
    Page { figures, svgs }
}
