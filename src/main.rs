//! The `markwell` binary: a thin shell over the library's command-line front end.
//!
//! It uses mimalloc as its allocator: parsing allocates token and node arrays per keystroke, and
//! an allocator that keeps freed pages avoids the page faults of returning them to the system
//! after every run (measured in `tests/benches/parse.rs`). It is mimalloc's version 2 line (the
//! `v2` feature): in the server the state kept of each open document pinned fewer pages than
//! with version 3 (`tests/lsp_hostile.rs`, 100 specs of 35 KB open: 65 times their text
//! against 100, before the server also gave free pages back after each run, which
//! `src/lsp/pages.rs` describes), at the same parsing speed.

#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn main() -> std::process::ExitCode {
    markwell::cli::main()
}
