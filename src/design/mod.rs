//! Design decisions: which layouts are candidates ([`candidates`]), which break an electrical
//! limit ([`rules`]), how large a battery or array the best one needs ([`sizing`]), and the
//! cautions every report carries ([`cautions`]).

pub mod assign;
pub mod candidates;
pub mod cautions;
pub mod rules;
pub mod sizing;
