//! Plumbline: open a data file you have never seen, learn its shape and the
//! quality of every field, and get record types that fit it.
//!
//! Data flows one way: [`source`] → [`shape`] (driven by [`scan`]) →
//! [`report`], the CLI and the window ([`gui`]).

pub mod cli;
pub mod compare;
pub mod explore;
pub mod fit;
pub mod format;
pub mod gui;
pub mod path;
pub mod plan;
pub mod profile;
pub mod report;
pub mod sample;
pub mod scan;
pub mod shape;
pub mod source;
pub mod time;
pub mod types;
pub mod value;
