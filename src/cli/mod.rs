//! The command-line front end: `markwell check`, `profile`, `rules`, `explain`, `serve`.

use std::process::ExitCode;

pub fn main() -> ExitCode {
    // minimal dispatch so the language server can be tested; the lead's CLI replaces this
    if std::env::args().nth(1).as_deref() == Some("serve") {
        return crate::lsp::run_stdio();
    }
    ExitCode::SUCCESS
}
