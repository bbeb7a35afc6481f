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

/// The heading of section `id` from [`SECTIONS`] (the id itself for an
/// unknown one).
pub fn heading(id: &str) -> &str {
    SECTIONS.iter().find(|s| s.0 == id).map_or(id, |s| s.1)
}

/// A section with its heading from [`SECTIONS`].
pub fn section(id: &str, body: &str) -> String {
    let heading = heading(id);
    format!("<section id=\"{id}\">\n<h2>{heading}</h2>\n{body}\n</section>\n")
}

/// The ids of the sections in `markup`, in order: what the navigation
/// links to is what is there.
pub fn ids_in(markup: &str) -> Vec<&'static str> {
    let mut found: Vec<(usize, &'static str)> = SECTIONS
        .iter()
        .filter_map(|(id, _)| {
            markup
                .find(&format!("<section id=\"{id}\">"))
                .map(|at| (at, *id))
        })
        .collect();
    found.sort_unstable();
    found.into_iter().map(|f| f.1).collect()
}
