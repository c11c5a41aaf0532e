//! The language server front end (`markwell serve`): the only module that speaks LSP.
//!
//! - [`run_stdio`] builds the tokio runtime and serves LSP over stdin/stdout;
//! - `server`: the tower-lsp handlers, document store and analysis loop;
//! - `documents`: open documents (rope + line index + latest analysis);
//! - `features`, `completion`: the LSP-free parts of hover, outline, colours, inlay hints,
//!   definition and completion, as pure functions over byte offsets;
//! - `convert`: lsp-types at the edge; `settings`: editor configuration;
//! - `framing`: checks message framing before tower-lsp reads it.

pub mod completion;
pub mod convert;
pub mod documents;
pub mod evaluate;
pub mod evaluation_cache;
pub mod features;
pub mod framing;
pub mod log;
mod pages;
pub mod server;
pub mod settings;
pub mod structure;
pub mod workspace;

use std::pin::Pin;
use std::process::ExitCode;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::task::{Context, Poll};

use tower_lsp::jsonrpc::{Request, Response};
use tower_lsp::{LspService, Server};

pub use server::Backend;

/// Set `MARKWELL_LSP_TEST_HOOKS=1` to register `markwell/testPanic` (used by the stdio tests).
const TEST_HOOKS_VARIABLE: &str = "MARKWELL_LSP_TEST_HOOKS";

/// Serve LSP over stdio until `exit` (or the end of stdin). Exit code 0 after `shutdown` then
/// `exit`, 1 when the input ended or `exit` came without `shutdown` (LSP 3.17 `exit`).
pub fn run_stdio() -> ExitCode {
    let runtime = match tokio::runtime::Builder::new_multi_thread()
        .worker_threads(2)
        .enable_all()
        .build()
    {
        Ok(runtime) => runtime,
        Err(error) => {
            log::error(&format!("cannot start the async runtime: {error}"));
            return ExitCode::FAILURE;
        }
    };
    let shutdown_requested = Arc::new(AtomicBool::new(false));
    let exit_received = Arc::new(tokio::sync::Notify::new());
    let shutdown_flag = shutdown_requested.clone();
    // SIGINT/SIGTERM end the server cleanly (exit code 0), like `shutdown` then `exit`
    let signalled = Arc::new(AtomicBool::new(false));
    let signal_flag = signalled.clone();
    let exit_signal = exit_received.clone();
    runtime.block_on(async move {
        let signalled = signal_flag;
        let mut builder = LspService::build(move |client| Backend::new(client, shutdown_flag));
        if std::env::var(TEST_HOOKS_VARIABLE).is_ok_and(|value| value == "1") {
            builder = builder.custom_method("markwell/testPanic", Backend::test_panic);
        }
        let (service, socket) = builder.finish();
        let service = ExitWatch {
            inner: service,
            exit_received: exit_signal,
        };
        // frames are checked before tower-lsp reads them (see `framing`)
        let (server_input, checked_frames) = tokio::io::duplex(1 << 20);
        let (server_output, output_frames) = tokio::io::duplex(1 << 20);
        let (errors, injected) = tokio::sync::mpsc::unbounded_channel();
        tokio::spawn(framing::forward_valid_frames(
            tokio::io::stdin(),
            checked_frames,
            errors,
        ));
        let writer = tokio::spawn(framing::write_frames(
            output_frames,
            injected,
            tokio::io::stdout(),
        ));
        let server = Server::new(server_input, server_output, socket);
        tokio::select! {
            _ = server.serve(service) => {
                log::info("input ended");
                // the server's output is closed: let the writer copy what is left
                let _ = tokio::time::timeout(std::time::Duration::from_secs(2), writer).await;
            }
            _ = exit_received.notified() => log::info("exit received"),
            signal = termination_signal() => {
                log::info(&format!("{signal} received: ending"));
                signalled.store(true, Ordering::SeqCst);
            }
        }
    });
    // the stdin reader thread may still be blocked in a read: do not wait for it
    runtime.shutdown_background();
    if shutdown_requested.load(Ordering::SeqCst) || signalled.load(Ordering::SeqCst) {
        ExitCode::SUCCESS
    } else {
        ExitCode::FAILURE
    }
}

/// Forwards every message to the LSP service and signals when `exit` has been handled, so that
/// the process ends without waiting for the client to close stdin.
struct ExitWatch<S> {
    inner: S,
    exit_received: Arc<tokio::sync::Notify>,
}

impl<S> tower_service::Service<Request> for ExitWatch<S>
where
    S: tower_service::Service<Request, Response = Option<Response>>,
    S::Future: Send + 'static,
{
    type Response = Option<Response>;
    type Error = S::Error;
    type Future =
        Pin<Box<dyn std::future::Future<Output = Result<Option<Response>, S::Error>> + Send>>;

    fn poll_ready(&mut self, context: &mut Context<'_>) -> Poll<Result<(), Self::Error>> {
        self.inner.poll_ready(context)
    }

    fn call(&mut self, request: Request) -> Self::Future {
        let request = without_null_params(request);
        let is_exit = request.method() == "exit";
        let future = self.inner.call(request);
        let exit_received = self.exit_received.clone();
        Box::pin(async move {
            let response = future.await;
            if is_exit {
                exit_received.notify_one();
            }
            response
        })
    }
}

/// `"params": null` means no params (clients send it for `shutdown` and `exit`, whose params
/// are void in LSP 3.17); tower-lsp would refuse it as unexpected params.
fn without_null_params(request: Request) -> Request {
    if request.params() != Some(&serde_json::Value::Null) {
        return request;
    }
    let (method, id, _) = request.into_parts();
    let builder = Request::build(method);
    match id {
        Some(id) => builder.id(id).finish(),
        None => builder.finish(),
    }
}

/// The name of the first SIGINT or SIGTERM received (never resolves when signals cannot be
/// watched).
async fn termination_signal() -> &'static str {
    #[cfg(unix)]
    {
        use tokio::signal::unix::{signal, SignalKind};
        match (
            signal(SignalKind::interrupt()),
            signal(SignalKind::terminate()),
        ) {
            (Ok(mut interrupt), Ok(mut terminate)) => tokio::select! {
                _ = interrupt.recv() => "SIGINT",
                _ = terminate.recv() => "SIGTERM",
            },
            _ => {
                log::error("cannot watch SIGINT/SIGTERM");
                std::future::pending().await
            }
        }
    }
    #[cfg(not(unix))]
    {
        match tokio::signal::ctrl_c().await {
            Ok(()) => "Ctrl-C",
            Err(_) => std::future::pending().await,
        }
    }
}
