//! Integration tests, compiled into one binary and grouped by topic.
mod assign;
mod browser;
mod cli;
mod decision;
mod electrical;
mod enumerate;
mod export;
mod fuzz;
mod golden;
mod invariants;
mod limits;
mod limits_input;
mod output_safety;
mod screening;
mod support;
mod synth;
mod weather;
