//! Every entry of the function table, checked as its consumers use it, so a
//! new entry is covered without a test of its own: a call compiles (the
//! compiled program gives the interpreter's value to the bit), its value
//! agrees with an independent implementation, its interval rule encloses
//! the values sampled over a box, and its dual rules give the derivative a
//! central difference measures (at a point) and enclose the point
//! derivatives over a box. A function that takes vectors must say so: its
//! call compiles to `NeedsVectors`, never to a program. And the language
//! guide names every function.
//!
//! Sample arguments are found, not listed: every combination of a grid of
//! values, in each of a few units, that the function's own check accepts.

// The reference values use std's maths functions (the platform's maths
// library), independent of the libm the table uses.
#![allow(clippy::disallowed_methods)]

use std::sync::Arc;

use super::*;
use crate::numeric::{Dual, Interval};
use crate::sheet::Sheet;
use crate::syntax::ast::Target;
use crate::units::functions::{Arity, FUNCTIONS, Function, Kind};

/// Argument values tried (SI), avoiding 0 and ±1 so that no sample sits on
/// a kink or a domain edge.
const GRID: [f64; 8] = [-2.3, -0.7, -0.15, 0.35, 0.8, 1.2, 1.6, 3.1];

/// Units tried for the arguments (all of one unit in a call), with their
/// dimensions.
const UNITS: [(&str, Dimension); 3] = [
    ("", Dimension::NONE),
    (" m", Dimension::LENGTH),
    (" m^2", Dimension::AREA),
];

/// Half-widths of the boxes around each sample point.
const RADII: [f64; 4] = [0.0, 1e-3, 0.1, 0.6];

/// Points sampled per argument across a box, ends included.
const ACROSS: usize = 5;

/// The value of `name` at `args` from an independent implementation.
fn reference(name: &str, args: &[f64]) -> Option<f64> {
    let x = args[0];
    let fold = |f: fn(f64, f64) -> f64| args.iter().copied().reduce(f);
    Some(match name {
        "sqrt" => x.sqrt(),
        "abs" => x.abs(),
        "sin" => x.sin(),
        "cos" => x.cos(),
        "tan" => x.tan(),
        "asin" => x.asin(),
        "acos" => x.acos(),
        "atan" => x.atan(),
        "atan2" => x.atan2(args[1]),
        "sinh" => x.sinh(),
        "cosh" => x.cosh(),
        "tanh" => x.tanh(),
        "asinh" => x.asinh(),
        "acosh" => x.acosh(),
        "atanh" => x.atanh(),
        "exp" => x.exp(),
        "ln" => x.ln(),
        "log10" => x.log10(),
        "min" => fold(f64::min)?,
        "max" => fold(f64::max)?,
        // √(a² + b² + …) summed directly: no scaling is needed at these
        // magnitudes.
        "hypot" => args.iter().map(|a| a * a).sum::<f64>().sqrt(),
        _ => return None,
    })
}

/// The argument counts to try: the least the function takes, and one more
/// where it takes more.
fn counts(arity: Arity) -> Vec<usize> {
    let least = match arity {
        Arity::Exactly(n) | Arity::AtLeast(n) | Arity::Between(n, _) => n,
    };
    [least, least + 1]
        .into_iter()
        .filter(|&n| arity.accepts(n))
        .collect()
}

/// Every point of `values` in `n` dimensions.
fn grid_points(values: &[f64], n: usize) -> Vec<Vec<f64>> {
    every_combination(&vec![values.to_vec(); n])
}

/// Every point whose k-th coordinate is one of `axes[k]`.
fn every_combination(axes: &[Vec<f64>]) -> Vec<Vec<f64>> {
    axes.iter().fold(vec![Vec::new()], |points, values| {
        points
            .iter()
            .flat_map(|point| {
                values.iter().map(move |&value| {
                    let mut next = point.clone();
                    next.push(value);
                    next
                })
            })
            .collect()
    })
}

/// `n` points across `[lo, hi]`, both ends included.
fn across(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    if lo == hi {
        return vec![lo];
    }
    (0..n)
        .map(|i| lo + (hi - lo) * i as f64 / (n - 1) as f64)
        .collect()
}

/// A call of `function` on `n` arguments of `unit`, compiled with every
/// argument an input, and the sample points its check accepts.
struct Compiled {
    program: Program,
    points: Vec<Vec<f64>>,
}

/// Compiles `function` on `n` arguments in `unit` and checks the program
/// against the interpreter at every accepted point; `None` if the function
/// accepts no point in this unit.
fn compile_and_compare(
    function: &Function,
    n: usize,
    (unit, dimension): (&str, Dimension),
) -> Option<Compiled> {
    let quantities = |point: &[f64], dimension| -> Vec<Quantity> {
        point
            .iter()
            .map(|&si| Quantity::new(si, dimension))
            .collect()
    };
    let points: Vec<Vec<f64>> = grid_points(&GRID, n)
        .into_iter()
        .filter(|point| {
            function
                .call_scalars(&quantities(point, dimension))
                .is_some_and(|result| result.is_ok_and(|q| q.si.is_finite()))
        })
        .collect();
    let first = points.first()?;
    let inputs: Vec<String> = first
        .iter()
        .map(|value| format!("{value:?}{unit}"))
        .collect();
    with_call(function, &inputs, |source, evaluator, expr, ids| {
        let input_of = |name: &NameRef| {
            let index = ids.iter().position(|&id| name.target == Target::Cell(id))?;
            Some(Input {
                index: index as u32,
                sample: evaluator.values[ids[index]]?.scalar()?,
            })
        };
        let program = match evaluator.compile(expr, &input_of) {
            Ok(program) => program,
            Err(error) => panic!("`{source}` does not compile: {error:?}"),
        };
        for point in &points {
            for (&id, &si) in ids.iter().zip(point) {
                evaluator.values[id] = Some(Value::Scalar(Quantity::new(si, dimension)));
            }
            let interpreted = evaluator
                .eval(expr)
                .ok()
                .and_then(|value| value.scalar())
                .map_or(f64::NAN, |q| q.si);
            let compiled = program.run(point);
            assert_eq!(
                compiled.to_bits(),
                interpreted.to_bits(),
                "{}{point:?}: compiled {compiled}, interpreted {interpreted}",
                function.name
            );
        }
        Some(Compiled { program, points })
    })
}

/// A sheet of the inputs `a0 = …`, `a1 = …` (as written in `inputs`) and
/// the cell `r = function(a0, a1, …)`, evaluated; `with` gets its source,
/// the evaluator, `r`'s formula and the inputs' cell ids.
fn with_call<R>(
    function: &Function,
    inputs: &[String],
    with: impl FnOnce(&str, &mut Evaluator<'_>, &Expr, &[usize]) -> R,
) -> R {
    let names: Vec<String> = (0..inputs.len()).map(|i| format!("a{i}")).collect();
    let mut source = String::new();
    for (name, value) in names.iter().zip(inputs) {
        source.push_str(&format!("{name} = {value}\n"));
    }
    source.push_str(&format!("r = {}({})\n", function.name, names.join(", ")));
    let sheet = Arc::new(Sheet::parse(&source));
    let text: Arc<str> = Arc::from(source.as_str());
    let mut evaluator = Evaluator::new(&sheet, &text);
    for id in 0..sheet.cells.len() {
        evaluator.evaluate_cell(id);
    }
    let ids: Vec<usize> = names
        .iter()
        .map(|name| sheet.names[name.as_str()])
        .collect();
    let expr = sheet.cell(sheet.names["r"]).expr.expect("a formula");
    with(&source, &mut evaluator, expr, &ids)
}

#[test]
fn every_function_compiles_to_the_interpreters_value() {
    for function in FUNCTIONS {
        if let Kind::Vectors(_) = function.kind {
            continue;
        }
        for n in counts(function.arity) {
            let compiled: Vec<Compiled> = UNITS
                .iter()
                .filter_map(|&unit| compile_and_compare(function, n, unit))
                .collect();
            assert!(
                compiled.iter().map(|c| c.points.len()).sum::<usize>() >= 3,
                "`{}` of {n} arguments accepts fewer than 3 sample points: widen GRID or UNITS",
                function.name
            );
        }
    }
}

#[test]
fn every_function_agrees_with_an_independent_implementation() {
    for function in FUNCTIONS {
        if let Kind::Vectors(_) = function.kind {
            continue;
        }
        for n in counts(function.arity) {
            for point in grid_points(&GRID, n) {
                let args: Vec<Quantity> = point.iter().map(|&si| Quantity::number(si)).collect();
                let Some(Ok(value)) = function.call_scalars(&args) else {
                    continue;
                };
                let expected = reference(function.name, &point).unwrap_or_else(|| {
                    panic!(
                        "`{}` has no reference in `reference`: add one from an independent implementation",
                        function.name
                    )
                });
                // Correctly rounded within a couple of units in the last
                // place each, so they may differ by a few.
                let tolerance = 4.0 * f64::EPSILON * expected.abs().max(f64::MIN_POSITIVE);
                assert!(
                    (value.si - expected).abs() <= tolerance,
                    "{}{point:?} = {} but the reference gives {expected}",
                    function.name,
                    value.si
                );
            }
        }
    }
}

/// The boxes of half-width `radius` around `point`.
fn boxes(point: &[f64], radius: f64) -> Vec<Interval> {
    point
        .iter()
        .map(|&x| Interval::new(x - radius, x + radius))
        .collect()
}

/// Points sampled across a box.
fn samples(boxes: &[Interval]) -> Vec<Vec<f64>> {
    let axes: Vec<Vec<f64>> = boxes
        .iter()
        .map(|range| across(range.lo, range.hi, ACROSS))
        .collect();
    every_combination(&axes)
}

/// The compiled call of every scalar function, for every argument count.
fn every_compiled_call() -> Vec<(&'static str, Compiled)> {
    let mut calls = Vec::new();
    for function in FUNCTIONS {
        if let Kind::Vectors(_) = function.kind {
            continue;
        }
        for n in counts(function.arity) {
            if let Some(compiled) = UNITS
                .iter()
                .find_map(|&unit| compile_and_compare(function, n, unit))
            {
                calls.push((function.name, compiled));
            }
        }
    }
    calls
}

#[test]
fn every_function_encloses_its_values_over_a_box() {
    for (name, Compiled { program, points }) in every_compiled_call() {
        for point in &points {
            for radius in RADII {
                let boxes = boxes(point, radius);
                let enclosure = program.run(&boxes);
                for sample in samples(&boxes) {
                    let value = program.run(&sample);
                    if !value.is_finite() {
                        continue;
                    }
                    assert!(
                        enclosure.contains(value),
                        "{name} over {boxes:?} gives {enclosure:?}, which misses {value} at {sample:?}"
                    );
                }
                if radius == 0.0 {
                    let value = program.run(point);
                    assert!(
                        enclosure.hi - enclosure.lo <= 1e-12 * value.abs().max(1.0),
                        "{name} at {point:?} gives {enclosure:?}: not tight around {value}"
                    );
                }
            }
        }
    }
}

/// The derivative along argument `along` at `point`, by dual numbers.
fn dual_derivative(program: &Program, point: &[f64], along: usize) -> Dual<f64> {
    program.run(&seeded_along(point, along))
}

/// Dual numbers of `values`, the one at `along` the variable.
fn seeded_along<T: crate::numeric::Number>(values: &[T], along: usize) -> Vec<Dual<T>> {
    values
        .iter()
        .enumerate()
        .map(|(i, &x)| {
            if i == along {
                Dual::variable(x)
            } else {
                Dual::fixed(x)
            }
        })
        .collect()
}

#[test]
fn every_function_has_the_derivative_a_central_difference_measures() {
    // Central difference (f(x + h) − f(x − h)) / 2h, error h² f‴/6; where the
    // one-sided differences disagree the point is a kink, and the rule's
    // slope must lie between them.
    for (name, Compiled { program, points }) in every_compiled_call() {
        for point in &points {
            for along in 0..point.len() {
                let dual = dual_derivative(&program, point, along);
                let value = program.run(point);
                assert_eq!(dual.value.to_bits(), value.to_bits(), "{name}{point:?}");
                let h = 1e-6 * point[along].abs().max(1.0);
                let shifted = |by: f64| {
                    let mut moved = point.clone();
                    moved[along] += by;
                    program.run(&moved)
                };
                let (ahead, behind) = (shifted(h), shifted(-h));
                if !ahead.is_finite() || !behind.is_finite() {
                    continue;
                }
                let central = (ahead - behind) / (2.0 * h);
                let (forward, backward) = ((ahead - value) / h, (value - behind) / h);
                let scale = central.abs().max(1.0);
                let derivative = dual.derivative;
                if (forward - backward).abs() <= 1e-3 * scale {
                    assert!(
                        (derivative - central).abs() <= 1e-6 * scale,
                        "{name}{point:?} along {along}: dual {derivative}, central difference {central}"
                    );
                } else {
                    let (low, high) = (forward.min(backward), forward.max(backward));
                    assert!(
                        low - 1e-6 * scale <= derivative && derivative <= high + 1e-6 * scale,
                        "{name}{point:?} along {along}: dual {derivative} outside the one-sided slopes [{low}, {high}]"
                    );
                }
            }
        }
    }
}

#[test]
fn every_function_encloses_its_derivatives_over_a_box() {
    for (name, Compiled { program, points }) in every_compiled_call() {
        for point in &points {
            for radius in RADII {
                let boxes = boxes(point, radius);
                for along in 0..point.len() {
                    let enclosure = program.run(&seeded_along(&boxes, along));
                    for sample in samples(&boxes) {
                        let at_sample = dual_derivative(&program, &sample, along);
                        if !at_sample.value.is_finite() || !at_sample.derivative.is_finite() {
                            continue;
                        }
                        assert!(
                            enclosure.value.contains(at_sample.value)
                                && enclosure.derivative.contains(at_sample.derivative),
                            "{name} over {boxes:?} along {along} gives {enclosure:?}, which misses {at_sample:?} at {sample:?}"
                        );
                    }
                }
            }
        }
    }
}

#[test]
fn a_function_that_takes_vectors_says_so_when_compiled() {
    for function in FUNCTIONS {
        let Kind::Vectors(_) = function.kind else {
            continue;
        };
        let n = counts(function.arity)[0];
        let inputs = vec!["0.35".to_string(); n];
        let reports_vectors = with_call(function, &inputs, |_, evaluator, expr, ids| {
            let input_of = |name: &NameRef| {
                let index = ids.iter().position(|&id| name.target == Target::Cell(id))?;
                Some(Input {
                    index: index as u32,
                    sample: Quantity::number(0.35),
                })
            };
            matches!(
                evaluator.compile(expr, &input_of),
                Err(CompileError::NeedsVectors(_))
            )
        });
        assert!(
            reports_vectors,
            "`{}` takes vectors but its call does not report it",
            function.name
        );
    }
}

#[test]
fn every_function_is_in_the_language_guide() {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/docs/language.md");
    let guide = std::fs::read_to_string(path).unwrap_or_else(|error| panic!("{path}: {error}"));
    for function in FUNCTIONS {
        let named = |after: char| guide.contains(&format!("`{}{after}", function.name));
        assert!(
            named('`') || named('('),
            "`{}` is not in docs/language.md: list it with what it does",
            function.name
        );
    }
}
