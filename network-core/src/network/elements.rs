//! The element index space of a displacement: pores and throats share one
//! index range, pores first (`0..n_pores`), then throats
//! (`n_pores..n_pores + n_throats`). One queue, one state array and one
//! trapping search serve both; this type is the only place that encodes
//! and decodes the index.

/// An element of the displacement, decoded: a pore or a throat with its
/// index in the network's own columns.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Element {
    /// Pore index.
    Pore(usize),
    /// Throat index.
    Throat(usize),
}

/// The shared index space of a network's pores and throats.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Elements {
    n_pores: usize,
    n_throats: usize,
}

impl Elements {
    /// The index space of `n_pores` pores and `n_throats` throats.
    pub fn new(n_pores: usize, n_throats: usize) -> Elements {
        Elements { n_pores, n_throats }
    }

    /// Number of elements, `n_pores + n_throats`.
    #[inline]
    pub fn len(self) -> usize {
        self.n_pores + self.n_throats
    }

    /// True when there are no elements.
    #[inline]
    pub fn is_empty(self) -> bool {
        self.len() == 0
    }

    /// Number of pores (the first element indices).
    #[inline]
    pub fn n_pores(self) -> usize {
        self.n_pores
    }

    /// True when element `e` is a pore.
    #[inline]
    pub fn is_pore(self, e: usize) -> bool {
        e < self.n_pores
    }

    /// Element `e` decoded as a pore or a throat.
    #[inline]
    pub fn kind(self, e: usize) -> Element {
        if e < self.n_pores {
            Element::Pore(e)
        } else {
            Element::Throat(e - self.n_pores)
        }
    }

    /// The element index of throat `t`.
    #[inline]
    pub fn of_throat(self, t: usize) -> usize {
        self.n_pores + t
    }

    /// The throat index of element `e`, which must be a throat.
    #[inline]
    pub fn throat_of(self, e: usize) -> usize {
        debug_assert!(e >= self.n_pores, "element {e} is a pore");
        e - self.n_pores
    }

    /// The element index of `element`.
    #[inline]
    pub fn index(self, element: Element) -> usize {
        match element {
            Element::Pore(p) => p,
            Element::Throat(t) => self.n_pores + t,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pores_come_first_then_throats() {
        let s = Elements::new(3, 2);
        assert_eq!(s.len(), 5);
        assert_eq!(s.kind(2), Element::Pore(2));
        assert_eq!(s.kind(3), Element::Throat(0));
        assert_eq!(s.of_throat(1), 4);
        assert_eq!(s.throat_of(4), 1);
        for e in 0..s.len() {
            assert_eq!(s.index(s.kind(e)), e);
        }
    }
}
