use nestor::config::ConfigSource;
use nestor::solvers::TcSolver;
fn main() {
    let src = ConfigSource::load(std::path::Path::new(
        "configs/reference/nested_parabolic.toml",
    ))
    .unwrap();
    let sets: Vec<_> = std::env::args()
        .skip(1)
        .map(|s| nestor::config::Override::parse(&s).unwrap())
        .collect();
    let src = src.with_overrides(&sets).unwrap();
    let m = src.build(None).unwrap();
    let ch = &m.channels()[0];
    println!(
        "nu {} g {} lambda {} h {}",
        ch.nu(),
        ch.g(),
        ch.lambda(),
        ch.mismatch()
    );
    let s = TcSolver::default();
    let t0 = std::time::Instant::now();
    let u = s.uniform(&m, ch).unwrap();
    let tc0 = 1.133_866 * ch.cutoff() * (-1.0 / ch.lambda()).exp();
    println!(
        "uniform {:?} ratio {:.9} in {:?}",
        u,
        u.tc / tc0,
        t0.elapsed()
    );
    let t0 = std::time::Instant::now();
    let md = match s.modulated(&m, ch, &u) {
        Ok(x) => x,
        Err(e) => {
            println!("ERR {e}");
            return;
        }
    };
    println!(
        "mod {:?} ratio {:.6} in {:?}",
        md,
        md.tc.tc / tc0,
        t0.elapsed()
    );
}
