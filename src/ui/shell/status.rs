//! The status line at the bottom of every screen: the latest sentence on
//! the left, cut to the room there is with "…" (the whole of it, and the
//! reason behind it, on hover and in Help), and the standing pointer to
//! the cautions on the right, which is never covered.

use std::collections::VecDeque;

use eframe::egui;

use super::Status;

/// The pointer to the cautions that every screen keeps.
pub(super) const CAUTION_LINE: &str =
    "Keep sound levels low, tools guarded and dust extracted; see Help for the cautions.";

/// How many sentences Help lists.
const RECENT_KEPT: usize = 12;

/// The sentence shown and the latest ones before it.
#[derive(Debug, Default)]
pub(super) struct StatusLine {
    current: Option<Status>,
    recent: VecDeque<Status>,
}

impl StatusLine {
    /// Shows `status` and keeps it for Help.
    pub fn show(&mut self, status: Status) {
        let repeated = self
            .recent
            .back()
            .is_some_and(|last| last.text == status.text && last.detail == status.detail);
        if !repeated {
            if self.recent.len() == RECENT_KEPT {
                self.recent.pop_front();
            }
            self.recent.push_back(status.clone());
        }
        self.current = Some(status);
    }

    /// The sentence shown, if any.
    pub fn current(&self) -> Option<&Status> {
        self.current.as_ref()
    }

    /// The latest sentences, oldest first.
    pub fn recent(&self) -> impl Iterator<Item = &Status> {
        self.recent.iter()
    }

    /// Draws the line into `ui` (the bottom panel).
    pub fn draw(&mut self, ui: &mut egui::Ui) {
        let mut dismissed = false;
        ui.with_layout(egui::Layout::right_to_left(egui::Align::Center), |ui| {
            ui.add(egui::Label::new(egui::RichText::new(CAUTION_LINE).weak()).extend());
            ui.separator();
            if self.current.is_some() {
                dismissed = ui
                    .small_button("Dismiss")
                    .on_hover_text("Clear the message (Help keeps the latest ones)")
                    .clicked();
            }
            ui.with_layout(egui::Layout::left_to_right(egui::Align::Center), |ui| {
                match &self.current {
                    Some(status) => {
                        let mut text = egui::RichText::new(&status.text);
                        if status.is_error {
                            text = text.color(ui.visuals().error_fg_color);
                        }
                        ui.add(egui::Label::new(text).truncate())
                            .on_hover_text(full_text(status));
                    }
                    None => {
                        ui.add(
                            egui::Label::new(
                                egui::RichText::new(
                                    "Tap the plate near the microphone; taps and modes appear here.",
                                )
                                .weak(),
                            )
                            .truncate(),
                        );
                    }
                }
            });
        });
        if dismissed {
            self.current = None;
        }
    }
}

/// The sentence with the reason behind it, for hover and Help.
pub(super) fn full_text(status: &Status) -> String {
    match &status.detail {
        Some(detail) => format!("{} {detail}", status.text),
        None => status.text.clone(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn status(text: &str) -> Status {
        Status {
            text: text.to_owned(),
            is_error: false,
            detail: None,
        }
    }

    #[test]
    fn help_keeps_the_latest_sentences_once_each() {
        let mut line = StatusLine::default();
        for n in 0..20 {
            line.show(status(&format!("Message {n}.")));
            line.show(status(&format!("Message {n}.")));
        }
        let kept: Vec<&str> = line.recent().map(|s| s.text.as_str()).collect();
        assert_eq!(kept.len(), RECENT_KEPT);
        assert_eq!(kept.first(), Some(&"Message 8."));
        assert_eq!(kept.last(), Some(&"Message 19."));
        assert_eq!(line.current().map(|s| s.text.as_str()), Some("Message 19."));
    }
}
