//! What the report finds, each with its level and the node it is about, so
//! the text, the JSON and the plot show the same list.

use serde::Serialize;

/// How much a finding matters.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Level {
    /// The circuit does not work as it stands: a stage saturates, the ADC
    /// clips.
    Error,
    /// It works, but something needs fixing or checking.
    Warning,
    /// Something not checked, or assumed.
    Note,
}

impl Level {
    /// The level as the text report heads its list: `Errors`, `Warnings`,
    /// `Notes`.
    pub fn heading(self) -> &'static str {
        match self {
            Level::Error => "Errors",
            Level::Warning => "Warnings",
            Level::Note => "Notes",
        }
    }
}

/// Node names findings use besides a stage's own ([`stage_node`]).
pub mod node {
    /// The LED drive.
    pub const LED: &str = "LED";
    /// The detector's output: a transimpedance amplifier's or a
    /// phototransistor's.
    pub const DETECTOR: &str = "detector output";
    /// The ADC input (the last stage's output).
    pub const ADC: &str = "ADC input";
    /// The chain as a whole: its response and the heart band.
    pub const CHAIN: &str = "chain";
    /// The sample rate and the digital band-pass.
    pub const SAMPLING: &str = "sampling";
    /// The pulse given (or not).
    pub const PULSE: &str = "pulse";
}

/// The node after stage `index` (from 0): `stage 2 output`.
pub fn stage_node(index: usize) -> String {
    format!("stage {} output", index + 1)
}

/// One finding.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Finding {
    /// How much it matters.
    pub level: Level,
    /// Where: one of [`node`]'s names or a [`stage_node`].
    pub node: String,
    /// What, in one sentence.
    pub message: String,
}

impl Finding {
    /// A finding at `node`.
    pub fn new(level: Level, node: impl Into<String>, message: impl Into<String>) -> Self {
        Self {
            level,
            node: node.into(),
            message: message.into(),
        }
    }
}
