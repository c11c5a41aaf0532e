//! The `markwell` binary: a thin shell over the library's command-line front end.
//!
//! It uses mimalloc as its allocator: parsing allocates token and node arrays per keystroke, and
//! an allocator that keeps freed pages avoids the page faults of returning them to the system
//! after every run (measured in `tests/benches/parse.rs`).

#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn main() -> std::process::ExitCode {
    markwell::cli::main()
}
