//! The integration suite as one test binary: one compile and link of the test-only
//! dependencies instead of one per file, which is what made a fresh `cargo test --release` slow.
//! Each module is one area; run one with `cargo test --release --test suite -- MODULE::`.

mod cages;
mod cages_pipeline;
mod catalogue;
mod catalogue_cli;
mod cli_enumerate;
mod cluster_merge;
mod common;
mod derivative;
mod docs_examples;
mod draw;
mod energy;
mod enumerate;
mod export;
mod geometry;
mod huckel_kekule;
mod identify;
mod identify_catalogue;
mod install;
mod plan;
mod screen;
mod symmetry;
