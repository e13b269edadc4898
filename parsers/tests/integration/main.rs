//! Integration tests of the cube reader, built as one binary.

mod common;
mod errors;
mod read;
mod robustness;
mod shared;
