use rustfft::{num_complex::Complex64, FftPlanner};
fn load(p: &str) -> (Vec<f64>, f64) {
    let mut r = hound::WavReader::open(p).unwrap();
    let fs = r.spec().sample_rate as f64;
    (
        r.samples::<i16>()
            .map(|s| s.unwrap() as f64 / 32768.0)
            .collect(),
        fs,
    )
}
fn main() {
    let a: Vec<String> = std::env::args().collect();
    let (x, fs) = load(&a[1]);
    let lo: f64 = a[2].parse().unwrap();
    let hi: f64 = a[3].parse().unwrap();
    let win_ms: f64 = a[4].parse().unwrap();
    let n = (win_ms * 1e-3 * fs) as usize;
    let nfft = 1 << 18;
    let mut planner = FftPlanner::new();
    let fft = planner.plan_fft_forward(nfft);
    println!("len {} s", x.len() as f64 / fs);
    let mut start = 0;
    while start + n <= x.len() && start < (0.4 * fs) as usize {
        let mut buf: Vec<Complex64> = (0..nfft)
            .map(|i| {
                if i < n {
                    let w = 0.5 - 0.5 * (2.0 * std::f64::consts::PI * i as f64 / n as f64).cos();
                    Complex64::new(x[start + i] * w, 0.0)
                } else {
                    Complex64::new(0.0, 0.0)
                }
            })
            .collect();
        fft.process(&mut buf);
        let bin = fs / nfft as f64;
        let k0 = (lo / bin) as usize;
        let k1 = (hi / bin) as usize;
        // local maxima
        let p: Vec<f64> = buf[..nfft / 2]
            .iter()
            .map(|c| 10.0 * c.norm_sqr().max(1e-30).log10())
            .collect();
        let mut peaks: Vec<(f64, f64)> = (k0..k1)
            .filter(|&k| p[k] > p[k - 1] && p[k] >= p[k + 1])
            .map(|k| (k as f64 * bin, p[k]))
            .collect();
        peaks.sort_by(|a, b| b.1.total_cmp(&a.1));
        peaks.truncate(4);
        print!("t {:6.1} ms:", start as f64 / fs * 1e3);
        for (f, d) in peaks {
            print!("  {:8.1} Hz {:6.1} dB", f, d);
        }
        println!();
        start += n / 2;
    }
}
