//! The language server front end (the only module that speaks LSP).
