//! Weather generation: an hourly typical year synthesized from monthly means ([`synth`]) and
//! the small generator of the bundled demo year ([`sample`]). Pure: files are read and
//! written by `io/` and the `weather` command.

pub mod sample;
pub mod synth;
