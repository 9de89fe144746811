//! Data parallelism: rayon's thread pool with the default feature `rayon`, the same calls run
//! in sequence without it.
//!
//! The crate's parallel loops are written once against the names re-exported here
//! (`par_iter`, `par_iter_mut`, `par_chunks_mut`, `into_par_iter`, `join`). Every parallel loop in the crate combines its pieces in index
//! order, so both builds compute the same values bit for bit; only the time differs.
//! Applications that bring their own threading (an audio plug-in host, an embedded target)
//! build with `default-features = false`.

#[cfg(feature = "rayon")]
pub(crate) use rayon::join;
#[cfg(feature = "rayon")]
pub(crate) use rayon::prelude::*;

#[cfg(not(feature = "rayon"))]
pub(crate) use sequential::*;

/// The sequential stand-ins for the parts of rayon's API the crate uses.
#[cfg(not(feature = "rayon"))]
mod sequential {
    /// Runs `a`, then `b`.
    pub(crate) fn join<A, B, RA, RB>(a: A, b: B) -> (RA, RB)
    where
        A: FnOnce() -> RA,
        B: FnOnce() -> RB,
    {
        let ra = a();
        (ra, b())
    }

    /// A sequential iterator with rayon's method signatures (`fold` and `reduce` take an
    /// identity closure).
    pub(crate) struct Seq<I>(pub(crate) I);

    impl<I: Iterator> Seq<I> {
        /// As rayon's `map`.
        pub(crate) fn map<B, F: FnMut(I::Item) -> B>(self, f: F) -> Seq<core::iter::Map<I, F>> {
            Seq(self.0.map(f))
        }

        /// As rayon's `filter`.
        pub(crate) fn filter<P: FnMut(&I::Item) -> bool>(
            self,
            p: P,
        ) -> Seq<core::iter::Filter<I, P>> {
            Seq(self.0.filter(p))
        }

        /// As rayon's `enumerate`.
        pub(crate) fn enumerate(self) -> Seq<core::iter::Enumerate<I>> {
            Seq(self.0.enumerate())
        }

        /// As rayon's `for_each`.
        pub(crate) fn for_each<F: FnMut(I::Item)>(self, f: F) {
            self.0.for_each(f)
        }

        /// As rayon's `try_for_each`.
        pub(crate) fn try_for_each<E, F: FnMut(I::Item) -> Result<(), E>>(
            mut self,
            f: F,
        ) -> Result<(), E> {
            self.0.try_for_each(f)
        }

        /// As rayon's `collect`.
        pub(crate) fn collect<C: FromIterator<I::Item>>(self) -> C {
            self.0.collect()
        }

        /// As rayon's `fold`: one piece, so one accumulated value.
        pub(crate) fn fold<A, Id: Fn() -> A, F: FnMut(A, I::Item) -> A>(
            self,
            identity: Id,
            f: F,
        ) -> Seq<core::iter::Once<A>> {
            Seq(core::iter::once(self.0.fold(identity(), f)))
        }

        /// As rayon's `reduce`.
        pub(crate) fn reduce<Id: Fn() -> I::Item, F: FnMut(I::Item, I::Item) -> I::Item>(
            self,
            identity: Id,
            f: F,
        ) -> I::Item {
            self.0.fold(identity(), f)
        }
    }

    /// As rayon's `par_iter`, `par_iter_mut` and `par_chunks_mut` on slices.
    pub(crate) trait SeqSlice<T> {
        /// As rayon's `par_iter`.
        fn par_iter(&self) -> Seq<core::slice::Iter<'_, T>>;
        /// As rayon's `par_iter_mut`.
        fn par_iter_mut(&mut self) -> Seq<core::slice::IterMut<'_, T>>;
        /// As rayon's `par_chunks_mut`.
        fn par_chunks_mut(&mut self, size: usize) -> Seq<core::slice::ChunksMut<'_, T>>;
    }

    impl<T> SeqSlice<T> for [T] {
        fn par_iter(&self) -> Seq<core::slice::Iter<'_, T>> {
            Seq(self.iter())
        }
        fn par_iter_mut(&mut self) -> Seq<core::slice::IterMut<'_, T>> {
            Seq(self.iter_mut())
        }
        fn par_chunks_mut(&mut self, size: usize) -> Seq<core::slice::ChunksMut<'_, T>> {
            Seq(self.chunks_mut(size))
        }
    }

    /// As rayon's `into_par_iter`.
    pub(crate) trait SeqInto: IntoIterator + Sized {
        /// As rayon's `into_par_iter`.
        fn into_par_iter(self) -> Seq<Self::IntoIter> {
            Seq(self.into_iter())
        }
    }

    impl<T> SeqInto for Vec<T> {}
    impl SeqInto for core::ops::Range<usize> {}
    impl SeqInto for core::ops::RangeInclusive<usize> {}

    impl<I: Iterator> IntoIterator for Seq<I> {
        type Item = I::Item;
        type IntoIter = I;
        fn into_iter(self) -> I {
            self.0
        }
    }

    #[cfg(test)]
    mod tests {
        use super::*;

        #[test]
        fn fold_and_reduce_take_identities_as_rayon_does() {
            let v: Vec<u32> = (1..=10).collect();
            let sum = v
                .par_iter()
                .map(|&x| x)
                .fold(|| 0, |a, x| a + x)
                .reduce(|| 0, |a, b| a + b);
            assert_eq!(sum, 55);
            let mut w = vec![0u32; 7];
            w.par_chunks_mut(3)
                .enumerate()
                .for_each(|(i, c)| c.iter_mut().for_each(|x| *x = i as u32));
            assert_eq!(w, [0, 0, 0, 1, 1, 1, 2]);
            let (a, b) = join(|| 1, || 2);
            assert_eq!((a, b), (1, 2));
            let r: Result<(), u32> =
                (0..5usize)
                    .into_par_iter()
                    .try_for_each(|i| if i == 3 { Err(3) } else { Ok(()) });
            assert_eq!(r, Err(3));
        }
    }
}
