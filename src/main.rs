//! The `framecost` binary: parse the command line, call the library, map errors to exit codes.

fn main() {
    // Output piped into `head` and the like: end quietly when the reader goes away, as
    // command-line tools do, instead of panicking on a failed print (Rust ignores SIGPIPE
    // by default).
    // SAFETY: restoring the default disposition of one signal before any thread starts.
    unsafe { libc::signal(libc::SIGPIPE, libc::SIG_DFL) };
    // Started as the launcher of a program design's run: nothing else is loaded.
    use framecost::measure::program::launch;
    if let Some(code) = launch::run_if_launcher() {
        std::process::exit(code);
    }
    if let Ok(exe) = std::env::current_exe() {
        launch::set_launcher(exe);
    }
    std::process::exit(framecost::cli::main());
}
