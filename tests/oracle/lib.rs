//! Independent oracles for the reference tests.
