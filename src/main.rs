//! The `framecost` binary: parse the command line, call the library, map errors to exit codes.

fn main() {
    // Output piped into `head` and the like: end quietly when the reader goes away, as
    // command-line tools do, instead of panicking on a failed print (Rust ignores SIGPIPE
    // by default).
    // SAFETY: restoring the default disposition of one signal before any thread starts.
    unsafe { libc::signal(libc::SIGPIPE, libc::SIG_DFL) };
    std::process::exit(framecost::cli::main());
}
