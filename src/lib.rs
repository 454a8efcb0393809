//! wirerank: ranks the ways to wire small solar arrays into battery charge controllers.
pub mod physics;
