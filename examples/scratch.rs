fn main() {
    for tol in ["1e-6", "1e-8", "1e-10", "1e-12"] {
        let src = format!(
            "m = 5 kg\nc = 0.02 kg/m\nsimulate t from 0 s to 10 s:\n  x' = v\n  v' = g0 - c / m * v * abs(v)\n  x(0) = 0 m\n  v(0) = 0 m/s\n  tolerance {tol}\n  table at 0.5 s, 1 s, 2 s, 5 s, 10 s\nend\n"
        );
        let ev = heftsheet::eval::evaluate_source(&src);
        assert!(ev.diagnostics.is_empty(), "{:?}", ev.diagnostics);
        let run = &ev.runs[0];
        let g = 9.80665f64;
        let vt = (5.0 * g / 0.02f64).sqrt();
        let mut worst = (0.0f64, 0.0f64);
        for row in &run.rows {
            let t = row.time;
            let x = row.values[0].unwrap().scalar().unwrap().si;
            let v = row.values[1].unwrap().scalar().unwrap().si;
            if t == 0.0 {
                continue;
            }
            let ve = vt * (g * t / vt).tanh();
            let xe = vt * vt / g * (g * t / vt).cosh().ln();
            worst.0 = worst.0.max(((v - ve) / ve).abs());
            worst.1 = worst.1.max(((x - xe) / xe).abs());
        }
        println!(
            "drag tol {tol}: steps {} rel err v {:.2e} x {:.2e}",
            run.stats.accepted, worst.0, worst.1
        );
    }
    for tol in ["1e-6", "1e-8", "1e-10"] {
        let src = format!(
            "m = 4 kg\nk = 1600 N/m\nsimulate t from 0 s to 314.1592653589793 s:\n  x' = v\n  v' = -k / m * x\n  x(0) = 0.02 m\n  v(0) = 0.5 m/s\n  tolerance {tol}\nend\nE0 [J] = (k * x^2 / 2 + m * v^2 / 2) at start\nE1 [J] = (k * x^2 / 2 + m * v^2 / 2) at end\n"
        );
        let start = std::time::Instant::now();
        let ev = heftsheet::eval::evaluate_source(&src);
        let el = start.elapsed();
        assert!(ev.diagnostics.is_empty(), "{:?}", ev.diagnostics);
        let e0 = ev.cell("E0").unwrap().value.unwrap().si;
        let e1 = ev.cell("E1").unwrap().value.unwrap().si;
        println!(
            "osc 1000 periods tol {tol}: steps {} energy rel {:.2e} time {:?}",
            ev.runs[0].stats.accepted,
            (e1 / e0 - 1.0),
            el
        );
    }
}
