//! Freed memory goes back to the system when a run on a blocking thread ends.
//!
//! The `markwell` binary allocates with mimalloc (`src/main.rs`). An analysis frees its
//! temporaries when it ends, but mimalloc keeps the emptied pages (its purge delay) and purges
//! them only when that thread allocates again, so a server that goes quiet after a burst of
//! analyses keeps them resident, and the state it keeps of each document pins pages the
//! temporaries shared. Collecting the thread's heap, forced, at the end of each run returns them:
//! 100 open specs of 35 KB cost 48 times their text in resident memory instead of 65 (100 with
//! mimalloc's version 3 line, see `src/main.rs`; `tests/lsp_hostile.rs`, debug build), for about 5 ms more per keystroke on a 1 MB spec
//! (`cargo bench --bench lsp`: median 30 ms instead of 25). A purge delay of zero kept a little
//! less (41 times) but doubled that keystroke's time, because it purges during the run too.
//!
//! Where another allocator is in use (the library's own tests), the thread has no mimalloc heap
//! and the collection returns at once.

/// `tokio::task::spawn_blocking`, and then the thread's free pages go back to the system. The
/// server's large runs on the blocking pool go through here: analyses, evaluations, profiles,
/// closed-spec checks and the workspace scan; short lookups use the pool directly.
pub(crate) fn spawn_blocking<T, F>(work: F) -> tokio::task::JoinHandle<T>
where
    F: FnOnce() -> T + Send + 'static,
    T: Send + 'static,
{
    tokio::task::spawn_blocking(move || {
        let result = work();
        // SAFETY: `mi_collect` has no preconditions. It walks the calling thread's own heap,
        // frees the pages none of whose blocks is in use and purges the freed memory; live blocks
        // are not moved, and a thread without a mimalloc heap returns at once.
        unsafe { libmimalloc_sys::mi_collect(true) };
        result
    })
}
