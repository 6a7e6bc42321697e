use std::process::ExitCode;

fn main() -> ExitCode {
    // Output piped into `head` or a pager that quits early: end quietly like other Unix
    // tools, instead of failing on the closed pipe. Rust ignores SIGPIPE by default.
    #[cfg(unix)]
    // SAFETY: called first, before any thread exists; restores the default disposition.
    unsafe {
        libc::signal(libc::SIGPIPE, libc::SIG_DFL);
    }
    fillwright::cli::main()
}
