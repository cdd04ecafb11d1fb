//! The generated sheets the benchmarks share.

/// A sheet shaped like a long calculation: every tenth cell is an input with
/// a unit and a description, the rest are formulas over recent cells with a
/// declared unit on half of them, a check every hundred cells.
///
/// Cell numbers are written with six digits (`m000120`), so a cell is the
/// same text in a sheet of any size up to a million cells and sheets of
/// different sizes differ only in how many cells they have. (Unpadded, a
/// million-cell sheet's cells are 7.6 % longer than a 100,000-cell sheet's.)
pub fn generated_sheet(n_cells: usize) -> String {
    let mut text = String::from("+++\ntitle = \"generated\"\ndisplay = \"SI\"\n+++\n# Generated\n");
    for i in 0..n_cells {
        let line = match i % 10 {
            0 => format!("m{i:06} = {} kg \"input mass {i:06}\"\n", 100 + i % 900),
            1 => format!("a{i:06} = 0.{} m/s^2\n", 1 + i % 9),
            2 => format!(
                "F{i:06} [kN] = m{:06} * (g0 + a{:06})   \"tension {i:06}\"\n",
                i - 2,
                i - 1
            ),
            3 => format!("x{i:06} = F{:06} / (m{:06} * g0)\n", i - 1, i - 3),
            4 => format!("s{i:06} [kN] = F{:06} * x{:06} + 2.5 kN\n", i - 2, i - 1),
            5 => format!("t{i:06} = sqrt(2 * 1.5 m / a{:06})\n", i - 4),
            6 => format!("p{i:06} [kPa] = s{:06} / (0.02 m^2)\n", i - 2),
            7 => format!("q{i:06} = max(F{:06}, s{:06}) * 1.25\n", i - 5, i - 3),
            8 => format!(
                "r{i:06} [kN] = q{:06} - F{:06} \"reserve {i:06}\"\n",
                i - 1,
                i - 6
            ),
            _ => format!("u{i:06} = r{:06} / q{:06}\n", i - 1, i - 2),
        };
        text.push_str(&line);
        if i % 100 == 99 {
            text.push_str(&format!("check q{:06} <= 100 kN \"block {i:06}\"\n", i - 2));
        }
    }
    text
}

/// The generated sheet with ± 3 % on five of its input masses and
/// `n_cases` load cases, each overriding two inputs.
pub fn generated_sheet_with_cases(n_cells: usize, n_cases: usize) -> String {
    let mut text = generated_sheet(n_cells);
    for k in 0..5 {
        let i = k * (n_cells / 5) / 10 * 10;
        let line = format!("m{i:06} = {} kg \"input mass {i:06}\"", 100 + i % 900);
        text = text.replacen(
            &line,
            &format!("m{i:06} = {} kg ± 3 % \"input mass {i:06}\"", 100 + i % 900),
            1,
        );
    }
    for case in 0..n_cases {
        let (i, j) = (case * 10, case * 10 + 21);
        text.push_str(&format!(
            "case variant{case} \"load case {case}\":\n  m{i:06} = {} kg\n  a{j:06} = 0.{} m/s^2\nend\n",
            120 + case,
            2 + case
        ));
    }
    text
}
