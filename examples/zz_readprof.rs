use std::io::Write;
fn main() {
    let a: Vec<String> = std::env::args().collect();
    let path = std::path::PathBuf::from(&a[1]);
    let with_time = a[2] == "t";
    if !path.exists() {
        let f = std::fs::File::create(&path).unwrap();
        let mut w = std::io::BufWriter::with_capacity(1 << 20, f);
        writeln!(w, "# bench record").unwrap();
        if with_time {
            writeln!(w, "seconds,phase").unwrap();
        }
        let mut s: u64 = 0x1234_5678;
        let mut x = 0.0f64;
        for i in 0..10_000_000usize {
            s = s
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            x += ((s >> 11) as f64 / (1u64 << 53) as f64 - 0.5) * 1e-9;
            if with_time {
                writeln!(w, "{i},{x:.11e}").unwrap();
            } else {
                writeln!(w, "{x:.11e}").unwrap();
            }
        }
        w.flush().unwrap();
    }
    let opts = tauwise::io::series::SeriesOptions {
        tau0: if with_time { None } else { Some(1.0) },
        ..Default::default()
    };
    let reps: usize = a.get(3).map_or(5, |r| r.parse().unwrap());
    for _ in 0..reps {
        let t = std::time::Instant::now();
        let s = tauwise::io::series::read_series(&path, &opts).unwrap();
        eprintln!("{} {:?}", s.record.len(), t.elapsed());
    }
}
