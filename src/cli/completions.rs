//! `framecost completions SHELL` — a completion script for bash, zsh, fish, elvish or
//! PowerShell on stdout, made from the same definitions as `--help` (clap_complete).

/// Print a shell completion script.
#[derive(Debug, clap::Args)]
#[command(after_long_help = "Install, for example:\n  bash: framecost completions bash > ~/.local/share/bash-completion/completions/framecost\n  zsh:  framecost completions zsh > ~/.zfunc/_framecost   (with fpath+=~/.zfunc before compinit)\n  fish: framecost completions fish > ~/.config/fish/completions/framecost.fish")]
pub struct Args {
    /// The shell to complete for.
    #[arg(value_enum)]
    pub shell: clap_complete::Shell,
}

pub fn run(a: Args) -> Result<(), super::Failure> {
    let mut cmd = super::command();
    let mut out = Vec::new();
    clap_complete::generate(a.shell, &mut cmd, "framecost", &mut out);
    use std::io::Write;
    std::io::stdout().lock().write_all(&out).map_err(|e| super::Failure::Write(format!("could not write: {e}")))
}
