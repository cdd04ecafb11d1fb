//! Dependency order: Tarjan's strongly-connected components, iteratively (a
//! million-cell chain must not overflow the stack). Components come out
//! dependencies first, so the order evaluates every cell after the cells it
//! uses, and keeps file order wherever the dependencies allow.

use super::CellId;

/// The order to evaluate cells in, and the loops that prevent it.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct EvaluationOrder {
    /// Every cell, each after the cells it uses (cells in a loop included,
    /// in some order).
    pub order: Vec<CellId>,
    /// Each loop of cells that use each other, in file order within the loop.
    pub cycles: Vec<Vec<CellId>>,
}

const UNVISITED: usize = usize::MAX;

/// Orders cells by their dependencies; `uses[c]` lists what cell `c` uses.
pub fn evaluation_order(uses: &[Vec<CellId>]) -> EvaluationOrder {
    let n_cells = uses.len();
    let mut index_of = vec![UNVISITED; n_cells];
    let mut low_link = vec![0usize; n_cells];
    let mut on_stack = vec![false; n_cells];
    let mut component_stack: Vec<CellId> = Vec::new();
    let mut result = EvaluationOrder {
        order: Vec::with_capacity(n_cells),
        cycles: Vec::new(),
    };
    let mut next_index = 0usize;
    // Explicit call stack of (cell, position in its uses).
    let mut calls: Vec<(CellId, usize)> = Vec::new();

    for root in 0..n_cells {
        if index_of[root] != UNVISITED {
            continue;
        }
        calls.push((root, 0));
        index_of[root] = next_index;
        low_link[root] = next_index;
        next_index += 1;
        component_stack.push(root);
        on_stack[root] = true;

        while let Some(&mut (cell, ref mut position)) = calls.last_mut() {
            if let Some(&used) = uses[cell].get(*position) {
                *position += 1;
                if index_of[used] == UNVISITED {
                    index_of[used] = next_index;
                    low_link[used] = next_index;
                    next_index += 1;
                    component_stack.push(used);
                    on_stack[used] = true;
                    calls.push((used, 0));
                } else if on_stack[used] {
                    low_link[cell] = low_link[cell].min(index_of[used]);
                }
                continue;
            }
            calls.pop();
            if let Some(&(caller, _)) = calls.last() {
                low_link[caller] = low_link[caller].min(low_link[cell]);
            }
            if low_link[cell] == index_of[cell] {
                let mut component = Vec::new();
                while let Some(member) = component_stack.pop() {
                    on_stack[member] = false;
                    component.push(member);
                    if member == cell {
                        break;
                    }
                }
                let is_cycle = component.len() > 1 || uses[cell].contains(&cell);
                component.sort_unstable();
                result.order.extend_from_slice(&component);
                if is_cycle {
                    result.cycles.push(component);
                }
            }
        }
    }
    result
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn file_order_is_kept_when_it_already_works() {
        let uses = vec![vec![], vec![0], vec![0, 1]];
        assert_eq!(evaluation_order(&uses).order, vec![0, 1, 2]);
    }

    #[test]
    fn a_cell_comes_after_what_it_uses() {
        let uses = vec![vec![2], vec![], vec![1]];
        assert_eq!(evaluation_order(&uses).order, vec![1, 2, 0]);
    }

    #[test]
    fn loops_are_reported_with_every_member() {
        let uses = vec![vec![1], vec![2], vec![0], vec![3], vec![]];
        let order = evaluation_order(&uses);
        assert_eq!(order.cycles, vec![vec![0, 1, 2], vec![3]]);
        assert_eq!(order.order.len(), 5);
    }

    #[test]
    fn a_million_cell_chain_does_not_overflow() {
        let uses: Vec<Vec<CellId>> = (0..1_000_000)
            .map(|i| if i == 0 { vec![] } else { vec![i - 1] })
            .collect();
        let reversed: Vec<Vec<CellId>> = (0..1_000_000)
            .map(|i| if i == 999_999 { vec![] } else { vec![i + 1] })
            .collect();
        assert_eq!(evaluation_order(&uses).order.len(), 1_000_000);
        assert_eq!(evaluation_order(&reversed).order[0], 999_999);
    }
}
