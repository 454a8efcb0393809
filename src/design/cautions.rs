//! The cautions every report carries, in one place for every writer.

/// The cautions every report carries.
pub const CAUTIONS: &str = "\
Cautions: a DC array is live whenever light falls on it and cannot be switched off at the
modules. Cold raises module voltage. The limits checked here are screening checks, not a
code-compliance review: follow your local electrical code (e.g. NEC Article 690,
IEC 60364-7-712) and have a licensed professional check the design before building it.";
