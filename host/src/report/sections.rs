//! The page's sections: their order, ids and headings, and the markup
//! around one. Shared by the page and the views of its figures.

/// Sections in page order: `(id, heading)`.
pub const SECTIONS: [(&str, &str); 8] = [
    ("excerpt", "Signal excerpt"),
    ("heart-rate", "Heart-rate trend"),
    ("intervals", "Interval tachogram"),
    ("poincare", "Poincaré plot"),
    ("quality", "Quality timeline"),
    ("hrv", "Heart-rate variability"),
    ("filter", "Band-pass filter"),
    ("score", "Score against the reference"),
];

/// A section with its heading from [`SECTIONS`].
pub fn section(id: &str, body: &str) -> String {
    let heading = SECTIONS.iter().find(|s| s.0 == id).map_or(id, |s| s.1);
    format!("<section id=\"{id}\">\n<h2>{heading}</h2>\n{body}\n</section>\n")
}
