//! The Help window: how to use Listen, and the caution note.

use eframe::egui;

/// Draws the help text.
pub fn show(ui: &mut egui::Ui) {
    egui::ScrollArea::vertical().id_salt("help scroll").show(ui, |ui| {
        ui.heading("Listen");
        ui.label(
            "Hold the plate lightly at a nodal point, tap it with a small mallet or a knuckle \
             near the microphone, and let it ring. Each tap appears in the tap list; the kept taps \
             are power-averaged into the spectrum, and the modes of the pass are listed below it \
             with frequency, Q, level, nearest note and spread across taps.",
        );
        ui.label(
            "Give a mode a label from the part's label set (or type your own). Leave out a tap \
             that sounds wrong; the pass is recombined at once. Start a new pass after each \
             graduation pass.",
        );
        ui.label(
            "Zoom the plot with the scroll wheel (Ctrl for the frequency axis only), drag to pan, \
             double-click or use Reset view to see the whole band.",
        );
        ui.label(
            "Without a microphone tapwright plays its bundled demo recording: six taps on an \
             invented violin top, one of them a double strike.",
        );
        ui.add_space(8.0);
        ui.heading("Caution");
        ui.label(
            "Loud sound: long exposure to sound above about 85 dB(A) risks lasting hearing damage \
             (NIOSH recommended exposure limit). Tap gently, keep headphone and monitor levels low.",
        );
        ui.label(
            "Driving a loudspeaker (Drive area): a steady tone tires the ear faster than tapping, \
             and a plate at resonance can be louder than the speaker alone. Start low, protect \
             your ears, keep the speaker within its rated power; Escape stops the tone.",
        );
        ui.label(
            "Sharp tools: gouges, planes, scrapers and knives used for graduation cut deep. Keep \
             them sharp, cut away from the hand that holds the work, and clamp the work.",
        );
        ui.label(
            "Wood dust is a recognised health hazard (IARC Group 1, carcinogenic to humans). \
             Use dust extraction and a suitable mask when sanding or scraping.",
        );
        ui.label(
            "These notes do not replace your local workshop-safety rules or professional \
             practice; follow those first.",
        );
        ui.add_space(8.0);
        ui.heading("About");
        ui.label(format!(
            "tapwright {}: a tap-tone workbench for stringed-instrument makers.",
            env!("CARGO_PKG_VERSION")
        ));
    });
}
