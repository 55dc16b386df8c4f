use nestor::config::ConfigSource;
use nestor::kernels::susceptibility::susceptibility;
use nestor::kernels::{Accuracy, Shell};
fn main() {
    let path = std::env::args().nth(1).unwrap();
    let src = ConfigSource::load(std::path::Path::new(&path)).unwrap();
    let m = src.build(None).unwrap();
    let ch = &m.channels()[0];
    let acc = Accuracy::default();
    let fine = Accuracy {
        rtol: 1e-11,
        order: 20,
        feature_width: 0.05,
        growth: 0.25,
        ..acc
    };
    for (q, t) in [
        ([0.0, 0.0], 0.5),
        ([0.005, 0.0], 0.5),
        ([0.005, 0.003], 0.2),
        ([0.0, 0.0], 0.05),
        ([0.0012, 0.0], 0.01),
    ] {
        let shell = Shell::for_channel(&m, ch, q).unwrap();
        let reference = susceptibility(&shell, t, &fine).unwrap().value;
        for a in [acc, acc.coarse()] {
            let t0 = std::time::Instant::now();
            let n = 10;
            let mut e = None;
            for _ in 0..n {
                e = Some(susceptibility(&shell, t, &a).unwrap());
            }
            let e = e.unwrap();
            println!(
                "q {:?} T {} rtol {:.0e}: rel.err {:.2e} (est {:.2e}) rays {} per eval {:?}",
                q,
                t,
                a.rtol,
                e.value / reference - 1.0,
                e.error / e.value,
                e.rays,
                t0.elapsed() / n
            );
        }
    }
}
