//! Progress bars on standard error: shown only when it is a terminal and
//! the user did not ask for quiet.

use std::io::IsTerminal;

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

/// Makes progress bars, or hidden ones.
#[derive(Clone, Copy, Debug)]
pub struct Bars {
    visible: bool,
}

impl Bars {
    /// Bars that show unless `quiet` or standard error is not a terminal.
    pub fn new(quiet: bool) -> Bars {
        Bars { visible: !quiet && std::io::stderr().is_terminal() }
    }

    /// Whether bars are drawn.
    pub fn visible(&self) -> bool {
        self.visible
    }

    /// A bar counting bytes read, without a known total.
    pub fn bytes(&self, what: &str) -> ProgressBar {
        let bar = self.make(None);
        bar.set_style(
            ProgressStyle::with_template(
                "{prefix:>10} {spinner} {bytes} read, {bytes_per_sec}, {elapsed}",
            )
            .expect("valid template"),
        );
        bar.set_prefix(what.to_string());
        bar
    }

    /// A bar over `len` steps; `unit` names them.
    pub fn steps(&self, what: &str, len: u64, unit: &str) -> ProgressBar {
        let bar = self.make(Some(len));
        let template = format!(
            "{{prefix:>10}} [{{bar:30}}] {{pos}}/{{len}} {unit}, \
             {{per_sec}}, ETA {{eta}} {{msg}}"
        );
        bar.set_style(
            ProgressStyle::with_template(&template)
                .expect("valid template")
                .progress_chars("=> "),
        );
        bar.set_prefix(what.to_string());
        bar
    }

    fn make(&self, len: Option<u64>) -> ProgressBar {
        if !self.visible {
            return ProgressBar::hidden();
        }
        let bar = match len {
            Some(len) => ProgressBar::new(len),
            None => ProgressBar::new_spinner(),
        };
        bar.set_draw_target(ProgressDrawTarget::stderr_with_hz(8));
        bar
    }
}
