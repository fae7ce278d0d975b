//! The `framecost` binary: parse the command line, call the library, map errors to exit codes.

fn main() {
    std::process::exit(framecost::cli::main());
}
