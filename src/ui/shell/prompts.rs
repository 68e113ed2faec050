//! The two questions the window asks about the open document: save before
//! closing (when the window is closed with unsaved changes), and what to do
//! when the build file changed on disk under it.

use eframe::egui;

use super::saver::SaveCheck;
use super::TapwrightApp;
use crate::ui::commands::AppCommand;

/// The maker's answer to "save before closing?".
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum CloseAnswer {
    Save,
    Discard,
    Cancel,
}

/// The maker's answer to "the file changed on disk".
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum ConflictAnswer {
    Reload,
    Copy,
    Overwrite,
    Later,
}

impl TapwrightApp {
    /// A close request (window button, Alt+F4) with unsaved changes is
    /// held back and the maker asked first.
    pub(super) fn hold_close_if_unsaved(&mut self, ctx: &egui::Context) {
        let asked = ctx.input(|i| i.viewport().close_requested());
        if !asked || self.document.closing.confirmed {
            return;
        }
        if self.document.build().is_some() && self.document.unsaved() {
            ctx.send_viewport_cmd(egui::ViewportCommand::CancelClose);
            self.document.closing.prompt = true;
        } else {
            self.document.closing.confirmed = true;
        }
    }

    pub(super) fn close_window_now(&mut self) {
        let closing = &mut self.document.closing;
        closing.prompt = false;
        closing.after_save = false;
        closing.confirmed = true;
        if let Some(ctx) = &self.ctx {
            ctx.send_viewport_cmd(egui::ViewportCommand::Close);
        }
    }

    pub(super) fn draw_close_prompt(&mut self, ctx: &egui::Context) {
        if !self.document.closing.prompt {
            return;
        }
        let name = self
            .document
            .build()
            .map(|b| b.name.clone())
            .unwrap_or_default();
        let has_file = self.document.path().is_some();
        let mut answer = None;
        let modal =
            egui::Modal::new(egui::Id::unique("close with unsaved changes")).show(ctx, |ui| {
                ui.heading("Unsaved changes");
                ui.label(format!(
                    "The build \"{name}\" has changes that are not saved. Save them before closing?"
                ));
                ui.horizontal(|ui| {
                    let save_text = if has_file {
                        "Save and close"
                    } else {
                        "Save as… and close"
                    };
                    if ui.button(save_text).clicked() {
                        answer = Some(CloseAnswer::Save);
                    }
                    if ui.button("Close without saving").clicked() {
                        answer = Some(CloseAnswer::Discard);
                    }
                    if ui.button("Cancel").clicked() {
                        answer = Some(CloseAnswer::Cancel);
                    }
                });
            });
        if modal.should_close() && answer.is_none() {
            answer = Some(CloseAnswer::Cancel);
        }
        match answer {
            Some(CloseAnswer::Save) => {
                self.document.closing.prompt = false;
                self.document.closing.after_save = true;
                match self.document.path().map(|p| p.to_path_buf()) {
                    Some(path) => self.document.queue_save(path, SaveCheck::IfUnchanged),
                    None => self.choose_copy_path(),
                }
            }
            Some(CloseAnswer::Discard) => self.close_window_now(),
            Some(CloseAnswer::Cancel) => self.document.closing.prompt = false,
            None => {}
        }
    }

    pub(super) fn draw_conflict_prompt(&mut self, ctx: &egui::Context) {
        let Some(path) = self.document.conflict().map(|p| p.to_path_buf()) else {
            return;
        };
        let mut answer = None;
        egui::Modal::new(egui::Id::unique("build file changed on disk")).show(ctx, |ui| {
            ui.heading("The build file changed on disk");
            ui.label(format!(
                "{} was changed by another window or program since this window opened or \
                 last saved it. Nothing was written. What should happen to the changes here?",
                path.display()
            ));
            ui.horizontal(|ui| {
                if ui
                    .button("Reload from disk")
                    .on_hover_text("Open the file as it is now; the changes here are dropped")
                    .clicked()
                {
                    answer = Some(ConflictAnswer::Reload);
                }
                if ui
                    .button("Save as a copy…")
                    .on_hover_text("Keep both: the file stays, the build here goes to a new file")
                    .clicked()
                {
                    answer = Some(ConflictAnswer::Copy);
                }
                if ui
                    .button("Overwrite the file")
                    .on_hover_text("Replace the file with the build here (the other changes are lost; the old file is kept as .bak)")
                    .clicked()
                {
                    answer = Some(ConflictAnswer::Overwrite);
                }
                if ui.button("Decide later").clicked() {
                    answer = Some(ConflictAnswer::Later);
                }
            });
        });
        let Some(answer) = answer else {
            return;
        };
        self.document.take_conflict();
        match answer {
            ConflictAnswer::Reload => self.commands.push(AppCommand::OpenBuild(path)),
            ConflictAnswer::Copy => self.choose_copy_path(),
            ConflictAnswer::Overwrite => self.document.queue_save(path, SaveCheck::Overwrite),
            ConflictAnswer::Later => {}
        }
    }
}
