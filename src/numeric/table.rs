//! Reading a table of numbers on a grid of one or two keys: where a key
//! falls among the rows, linear (bilinear) interpolation, and the readings
//! that take the least or the greatest of the bracketing rows. Pure `f64`s:
//! the sheet's tables, their units and spans live in `sheet`.

/// A grid of values over one or two sorted key axes.
#[derive(Clone, Debug, PartialEq)]
pub struct Grid {
    /// Each axis's keys, strictly increasing (one axis or two).
    pub axes: Vec<Vec<f64>>,
    /// The values, one per point of the grid, the last axis varying
    /// fastest (row-major).
    pub values: Vec<f64>,
}

/// How a grid is read at a point.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum GridReading {
    /// Only at a grid point.
    Exact,
    /// Linear in each axis between the bracketing keys (bilinear for two).
    Linear,
    /// The least value at the bracketing grid points.
    Least,
    /// The greatest value at the bracketing grid points.
    Greatest,
}

/// Where a key falls on an axis.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Bracket {
    /// On the key at this index.
    At(usize),
    /// Strictly between the keys at `lower` and `lower + 1`, at this
    /// fraction of the way.
    Between {
        /// The index of the key below.
        lower: usize,
        /// (x − lower key) / (upper key − lower key), in (0, 1).
        fraction: f64,
    },
}

impl Bracket {
    /// The indices of the keys it reads: one or two.
    pub fn indices(self) -> Vec<usize> {
        match self {
            Bracket::At(index) => vec![index],
            Bracket::Between { lower, .. } => vec![lower, lower + 1],
        }
    }
}

/// Why a grid cannot be read at a point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum GridError {
    /// The key on this axis lies outside its keys (or is not a number).
    Outside {
        /// The axis.
        axis: usize,
    },
    /// An exact reading whose key on this axis is no key of the grid.
    NotAKey {
        /// The axis.
        axis: usize,
        /// Where it falls.
        bracket: Bracket,
    },
}

/// A reading: the value, and the grid points it read (flat indices into
/// [`Grid::values`]).
#[derive(Clone, Debug, PartialEq)]
pub struct GridRead {
    /// The value read.
    pub value: f64,
    /// The grid points the value comes from.
    pub points: Vec<usize>,
}

/// Where `x` falls among the strictly increasing `keys`; `None` outside
/// them (never extrapolated) or for a NaN.
pub fn bracket(keys: &[f64], x: f64) -> Option<Bracket> {
    let (first, last) = (*keys.first()?, *keys.last()?);
    if !(first..=last).contains(&x) {
        return None;
    }
    // The first key not below x.
    let upper = keys.partition_point(|&key| key < x);
    if keys.get(upper) == Some(&x) {
        return Some(Bracket::At(upper));
    }
    let lower = upper.checked_sub(1)?;
    let (low, high) = (keys[lower], *keys.get(upper)?);
    Some(Bracket::Between {
        lower,
        fraction: (x - low) / (high - low),
    })
}

impl Grid {
    /// Reads the grid at `point` (one key per axis).
    pub fn read(&self, point: &[f64], reading: GridReading) -> Result<GridRead, GridError> {
        let mut brackets = Vec::with_capacity(self.axes.len());
        for (axis, keys) in self.axes.iter().enumerate() {
            let x = point.get(axis).copied().unwrap_or(f64::NAN);
            let found = bracket(keys, x).ok_or(GridError::Outside { axis })?;
            if reading == GridReading::Exact && matches!(found, Bracket::Between { .. }) {
                return Err(GridError::NotAKey {
                    axis,
                    bracket: found,
                });
            }
            brackets.push(found);
        }
        // Every corner of the bracketing cell, with its bilinear weight.
        let mut corners: Vec<(usize, f64)> = vec![(0, 1.0)];
        for (axis, found) in brackets.iter().enumerate() {
            let stride: usize = self.axes[axis + 1..].iter().map(Vec::len).product();
            corners = corners
                .into_iter()
                .flat_map(|(flat, weight)| {
                    let sides: Vec<(usize, f64)> = match *found {
                        Bracket::At(index) => vec![(index, 1.0)],
                        Bracket::Between { lower, fraction } => {
                            vec![(lower, 1.0 - fraction), (lower + 1, fraction)]
                        }
                    };
                    sides
                        .into_iter()
                        .map(move |(index, part)| (flat + index * stride, weight * part))
                })
                .collect();
        }
        let at = |flat: usize| self.values.get(flat).copied().unwrap_or(f64::NAN);
        let value = match reading {
            GridReading::Exact | GridReading::Linear => corners
                .iter()
                .map(|&(flat, weight)| weight * at(flat))
                .sum(),
            GridReading::Least => corners
                .iter()
                .map(|&(flat, _)| at(flat))
                .fold(f64::INFINITY, f64::min),
            GridReading::Greatest => corners
                .iter()
                .map(|&(flat, _)| at(flat))
                .fold(f64::NEG_INFINITY, f64::max),
        };
        Ok(GridRead {
            value,
            points: corners.into_iter().map(|(flat, _)| flat).collect(),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn line() -> Grid {
        Grid {
            axes: vec![vec![1.0, 2.0, 4.0]],
            values: vec![10.0, 8.0, 4.0],
        }
    }

    #[test]
    fn a_key_on_a_row_reads_that_row_only() {
        // By construction: the value written in the row.
        for reading in [
            GridReading::Exact,
            GridReading::Linear,
            GridReading::Least,
            GridReading::Greatest,
        ] {
            let read = line().read(&[2.0], reading).unwrap();
            assert_eq!((read.value, read.points), (8.0, vec![1]));
        }
    }

    #[test]
    fn between_rows_each_reading_takes_its_rows() {
        // Closed form: halfway between (2, 8) and (4, 4) is 6.
        let grid = line();
        assert_eq!(grid.read(&[3.0], GridReading::Linear).unwrap().value, 6.0);
        assert_eq!(grid.read(&[3.0], GridReading::Least).unwrap().value, 4.0);
        assert_eq!(grid.read(&[3.0], GridReading::Greatest).unwrap().value, 8.0);
        assert_eq!(
            grid.read(&[3.0], GridReading::Least).unwrap().points,
            vec![1, 2]
        );
        assert!(matches!(
            grid.read(&[3.0], GridReading::Exact),
            Err(GridError::NotAKey { axis: 0, .. })
        ));
    }

    #[test]
    fn outside_the_keys_is_never_extrapolated() {
        let grid = line();
        for x in [0.999, 4.001, f64::NAN, f64::INFINITY] {
            assert_eq!(
                grid.read(&[x], GridReading::Linear),
                Err(GridError::Outside { axis: 0 })
            );
        }
    }

    #[test]
    fn a_grid_of_two_keys_reads_its_four_corners() {
        // f(x, y) = x + 10 y on x ∈ {0, 1}, y ∈ {0, 2}: bilinear reproduces
        // a linear function exactly, so f(0.25, 0.5) = 5.25.
        let grid = Grid {
            axes: vec![vec![0.0, 1.0], vec![0.0, 2.0]],
            values: vec![0.0, 20.0, 1.0, 21.0],
        };
        let read = grid.read(&[0.25, 0.5], GridReading::Linear).unwrap();
        assert!((read.value - 5.25).abs() < 1e-12);
        assert_eq!(read.points, vec![0, 1, 2, 3]);
        assert_eq!(
            grid.read(&[0.25, 0.5], GridReading::Least).unwrap().value,
            0.0
        );
        assert_eq!(
            grid.read(&[1.0, 2.0], GridReading::Exact).unwrap().value,
            21.0
        );
    }
}
