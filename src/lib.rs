//! wirerank: ranks the ways to wire small solar arrays into battery charge controllers.
pub mod physics;
pub mod error;
pub mod io;
pub mod weather;
pub mod sample_weather;
