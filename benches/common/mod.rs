//! Sheets shared by the benchmarks (invented figures).

/// `n_sections` sections of 100 cells: an input mass, its weight, and a
/// chain of 98 loads each built on the one before, then a check. Editing a
/// section's input evaluates exactly its 100 cells.
pub fn sectioned_sheet(n_sections: usize) -> String {
    let mut text = String::from("+++\ntitle = \"generated\"\n+++\n");
    for section in 0..n_sections {
        text.push_str(&format!("# Section {section}\n"));
        text.push_str(&format!(
            "m{section} = {} kg \"input mass\"\n",
            100 + section % 900
        ));
        text.push_str(&format!("w{section}_0 [kN] = m{section} * g0\n"));
        for k in 1..99 {
            text.push_str(&format!(
                "w{section}_{k} [kN] = w{section}_{} * 1.01 + 0.2 kN\n",
                k - 1
            ));
        }
        text.push_str(&format!(
            "check w{section}_98 <= 5000 kN \"section {section}\"\n"
        ));
    }
    text
}
