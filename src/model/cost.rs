//! Where a show's cost comes from: the keys and tables that a refusal for
//! size (frames, table bytes, output bytes, samples) points at, each with
//! its line in the show file.

use super::Show;

impl Show {
    /// The line (from 1) of `key` in the `[show]` table, if it is written
    /// there as `key = ...`.
    pub fn show_key_line(&self, key: &str) -> Option<usize> {
        let mut in_show = false;
        for (i, line) in self.source.text.lines().enumerate() {
            let t = line.split('#').next().unwrap_or("").trim();
            if let Some(head) = t.strip_prefix('[') {
                in_show = head.trim_end_matches(']').trim() == "show";
                continue;
            }
            if in_show && t.split('=').next().map(str::trim) == Some(key) {
                return Some(i + 1);
            }
        }
        None
    }

    /// What sets the number of frames and LEDs, located: `show.frame_rate`
    /// and its line, the section that ends last and its line, and the prop
    /// with the most LEDs and its line. For the messages of size refusals.
    pub fn frame_cost_drivers(&self) -> String {
        let file = &self.source.name;
        let line = |offset: usize| self.source.line_col(offset).0;
        let mut parts = Vec::new();
        let rate = match self.show_key_line("frame_rate") {
            Some(l) => format!("`show.frame_rate` = {} ({file}:{l})", self.frame_rate_hz),
            None => format!("`show.frame_rate` = {}", self.frame_rate_hz),
        };
        parts.push(rate);
        if let Some((i, s)) = self
            .sections
            .iter()
            .enumerate()
            .max_by_key(|(_, s)| s.last_bar)
        {
            parts.push(format!(
                "`section[{i}].bars` ending at bar {} ({file}:{})",
                s.last_bar,
                line(s.offset)
            ));
        }
        if let Some(p) = self.props.iter().max_by_key(|p| p.leds) {
            parts.push(format!(
                "prop `{}` with {} LED{} ({file}:{})",
                p.name,
                p.leds,
                if p.leds == 1 { "" } else { "s" },
                line(p.offset)
            ));
        }
        crate::diag::escape(&parts.join(", "))
    }
}
