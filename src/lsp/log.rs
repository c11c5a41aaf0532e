//! Logging of the language server: stderr only (stdout carries the protocol). Lines look like
//! `markwell serve: info: ...`. `MARKWELL_LOG=debug` also prints debug lines.

use std::io::Write;
use std::sync::OnceLock;

fn debug_enabled() -> bool {
    static ENABLED: OnceLock<bool> = OnceLock::new();
    *ENABLED.get_or_init(|| std::env::var("MARKWELL_LOG").is_ok_and(|level| level == "debug"))
}

fn write_line(level: &str, message: &str) {
    let stderr = std::io::stderr();
    let mut handle = stderr.lock();
    // a closed stderr must not take the server down
    let _ = writeln!(handle, "markwell serve: {level}: {message}");
}

pub fn error(message: &str) {
    write_line("error", message);
}

pub fn info(message: &str) {
    write_line("info", message);
}

pub fn debug(message: &str) {
    if debug_enabled() {
        write_line("debug", message);
    }
}
