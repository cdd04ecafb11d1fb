//! The generated sheet every benchmark measures, so their figures compare.

/// A sheet shaped like a long calculation: every tenth cell is an input with
/// a unit and a description, the rest are formulas over recent cells with a
/// declared unit on half of them, a check every hundred cells.
pub fn generated_sheet(n_cells: usize) -> String {
    let mut text = String::from("+++\ntitle = \"generated\"\ndisplay = \"SI\"\n+++\n# Generated\n");
    for i in 0..n_cells {
        let line = match i % 10 {
            0 => format!("m{i} = {} kg \"input mass {i}\"\n", 100 + i % 900),
            1 => format!("a{i} = 0.{} m/s^2\n", 1 + i % 9),
            2 => format!(
                "F{i} [kN] = m{} * (g0 + a{})   \"tension {i}\"\n",
                i - 2,
                i - 1
            ),
            3 => format!("x{i} = F{} / (m{} * g0)\n", i - 1, i - 3),
            4 => format!("s{i} [kN] = F{} * x{} + 2.5 kN\n", i - 2, i - 1),
            5 => format!("t{i} = sqrt(2 * 1.5 m / a{})\n", i - 4),
            6 => format!("p{i} [kPa] = s{} / (0.02 m^2)\n", i - 2),
            7 => format!("q{i} = max(F{}, s{}) * 1.25\n", i - 5, i - 3),
            8 => format!("r{i} [kN] = q{} - F{} \"reserve {i}\"\n", i - 1, i - 6),
            _ => format!("u{i} = r{} / q{}\n", i - 1, i - 2),
        };
        text.push_str(&line);
        if i % 100 == 99 {
            text.push_str(&format!("check q{} <= 100 kN \"block {i}\"\n", i - 2));
        }
    }
    text
}
