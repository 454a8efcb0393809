//! The cautions every report carries, in one place for every writer.

/// The cautions every report carries.
pub const CAUTIONS: &str = "\
Cautions: a DC array is live whenever light falls on it and cannot be switched off at the
modules. Cold raises module voltage. The limits checked here are screening checks, not a
code-compliance review: follow your local electrical code (e.g. NEC Article 690,
IEC 60364-7-712) and have a licensed professional check the design before building it.";

/// One line at the top of long reports and on pictures; the full cautions close the reports.
pub const CAUTIONS_SHORT: &str = "Caution: DC arrays are live whenever lit; follow your local electrical code and have a licensed professional check the design (full cautions at the end).";

/// The cautions as one line (a CSV cell or a paragraph reads better without line breaks).
pub fn cautions_one_line() -> String {
    CAUTIONS.split_whitespace().collect::<Vec<_>>().join(" ")
}
