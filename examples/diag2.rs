#[path = "../tests/real/mod.rs"]
mod real;
use tapwright::analysis::analyze_recording;
fn main() {
    let a: Vec<String> = std::env::args().collect();
    let corpus = real::load_corpus();
    for s in corpus
        .iter()
        .filter(|s| a[1..].iter().any(|n| s.file.contains(n.as_str())))
    {
        let file = real::three_strikes(s, 1);
        let one = &file[..(2.0 * s.sample_rate_hz) as usize];
        let report = analyze_recording(
            one,
            s.sample_rate_hz,
            &real::trigger_settings(),
            &real::analysis_settings(),
        );
        println!("== {}", s.file);
        for m in &report.pass.modes {
            println!(
                "  {:9.2} Hz Q {:5.0} {:6.1} dB",
                m.frequency_hz, m.q, m.level_db
            );
        }
        let peaks = real::long_fft_peaks(s);
        for p in peaks
            .iter()
            .filter(|p| p.level_db > -20.0 && p.prominence_db >= 6.0)
        {
            println!(
                "  peak {:9.2} Hz {:6.1} dB prom {:5.1} hw {:5.1}",
                p.frequency_hz, p.level_db, p.prominence_db, p.half_width_hz
            );
        }
    }
}
