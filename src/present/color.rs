//! Colour, decided once for the process: `--color auto|always|never` is stored as
//! anstream's global choice (`cli::ColorWhen`), and anstream's own detection settles `auto`
//! — a terminal, NO_COLOR unset (and CLICOLOR / CLICOLOR_FORCE as the conventions say).
//! Styles are anstyle values; nothing in framecost writes escape codes by hand.

use anstyle::{AnsiColor, Color, Style};

/// Headings and names that lead a line.
pub const STRONG: Style = Style::new().bold();
/// Something the reader must not miss (a busy machine, a failure).
pub const ALARM: Style = Style::new().bold().fg_color(Some(Color::Ansi(AnsiColor::Red)));

/// Whether text printed on stdout should carry colour.
pub fn stdout_on() -> bool {
    anstream::AutoStream::choice(&std::io::stdout()) != anstream::ColorChoice::Never
}

/// Whether text printed on stderr should carry colour.
pub fn stderr_on() -> bool {
    anstream::AutoStream::choice(&std::io::stderr()) != anstream::ColorChoice::Never
}

/// `s` in `style` when `on`, plain otherwise.
pub fn paint(style: Style, on: bool, s: &str) -> String {
    if on {
        format!("{}{s}{}", style.render(), style.render_reset())
    } else {
        s.to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn styles_are_standard_sgr_sequences() {
        // ECMA-48 (5th ed., 8.3.117): SGR 1 is bold, 31 a red foreground, 0 resets.
        assert_eq!(paint(STRONG, true, "x"), "\u{1b}[1mx\u{1b}[0m");
        assert_eq!(paint(ALARM, true, "x"), "\u{1b}[1m\u{1b}[31mx\u{1b}[0m");
        assert_eq!(paint(ALARM, false, "x"), "x");
    }
}
