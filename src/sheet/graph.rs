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

/// Orders `n_nodes` nodes by their dependencies; `uses(n)` yields what node
/// `n` uses (repeats allowed). Nothing is allocated per node beyond the
/// order itself, so a million-cell sheet orders without a million vectors.
pub fn evaluation_order<Uses, Used>(n_nodes: usize, uses: Uses) -> EvaluationOrder
where
    Uses: Fn(usize) -> Used,
    Used: Iterator<Item = usize>,
{
    let mut index_of = vec![UNVISITED; n_nodes];
    let mut low_link = vec![0usize; n_nodes];
    let mut on_stack = vec![false; n_nodes];
    let mut component_stack: Vec<CellId> = Vec::new();
    let mut result = EvaluationOrder {
        order: Vec::with_capacity(n_nodes),
        cycles: Vec::new(),
    };
    let mut next_index = 0usize;
    // Explicit call stack of (node, what it uses still to visit).
    let mut calls: Vec<(CellId, Used)> = Vec::new();

    for root in 0..n_nodes {
        if index_of[root] != UNVISITED {
            continue;
        }
        calls.push((root, uses(root)));
        index_of[root] = next_index;
        low_link[root] = next_index;
        next_index += 1;
        component_stack.push(root);
        on_stack[root] = true;

        while let Some((cell, used_iter)) = calls.last_mut() {
            let cell = *cell;
            if let Some(used) = used_iter.next() {
                if index_of[used] == UNVISITED {
                    index_of[used] = next_index;
                    low_link[used] = next_index;
                    next_index += 1;
                    component_stack.push(used);
                    on_stack[used] = true;
                    calls.push((used, uses(used)));
                } else if on_stack[used] {
                    low_link[cell] = low_link[cell].min(index_of[used]);
                }
                continue;
            }
            calls.pop();
            if let Some(&mut (caller, _)) = calls.last_mut() {
                low_link[caller] = low_link[caller].min(low_link[cell]);
            }
            if low_link[cell] == index_of[cell] {
                // The component is the stack from `cell` up: sorted in place,
                // so the usual one-cell component allocates nothing.
                let start = component_stack
                    .iter()
                    .rposition(|&member| member == cell)
                    .unwrap_or(0);
                let component = &mut component_stack[start..];
                component.sort_unstable();
                for &member in component.iter() {
                    on_stack[member] = false;
                }
                result.order.extend_from_slice(component);
                if component.len() > 1 || uses(cell).any(|used| used == cell) {
                    result.cycles.push(component.to_vec());
                }
                component_stack.truncate(start);
            }
        }
    }
    result
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The order of cells given as lists of what each uses.
    fn order_of(uses: &[Vec<CellId>]) -> EvaluationOrder {
        evaluation_order(uses.len(), |cell| uses[cell].iter().copied())
    }

    #[test]
    fn file_order_is_kept_when_it_already_works() {
        let uses = vec![vec![], vec![0], vec![0, 1]];
        assert_eq!(order_of(&uses).order, vec![0, 1, 2]);
    }

    #[test]
    fn a_cell_comes_after_what_it_uses() {
        let uses = vec![vec![2], vec![], vec![1]];
        assert_eq!(order_of(&uses).order, vec![1, 2, 0]);
    }

    #[test]
    fn loops_are_reported_with_every_member() {
        let uses = vec![vec![1], vec![2], vec![0], vec![3], vec![]];
        let order = order_of(&uses);
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
        assert_eq!(order_of(&uses).order.len(), 1_000_000);
        assert_eq!(order_of(&reversed).order[0], 999_999);
    }
}
