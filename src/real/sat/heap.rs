//! The decision heap of [`Solver`]: variables by activity, highest first.

use super::{NONE, Solver};

impl Solver {
    pub(super) fn heap_less(&self, a: u32, b: u32) -> bool {
        self.act[a as usize] > self.act[b as usize]
    }

    pub(super) fn heap_up(&mut self, mut i: usize) {
        let x = self.heap[i];
        while i > 0 {
            let p = (i - 1) / 2;
            if !self.heap_less(x, self.heap[p]) {
                break;
            }
            self.heap[i] = self.heap[p];
            self.hpos[self.heap[i] as usize] = i as u32;
            i = p;
        }
        self.heap[i] = x;
        self.hpos[x as usize] = i as u32;
    }

    pub(super) fn heap_down(&mut self, mut i: usize) {
        let x = self.heap[i];
        let n = self.heap.len();
        loop {
            let l = 2 * i + 1;
            if l >= n {
                break;
            }
            let r = l + 1;
            let c = if r < n && self.heap_less(self.heap[r], self.heap[l]) {
                r
            } else {
                l
            };
            if !self.heap_less(self.heap[c], x) {
                break;
            }
            self.heap[i] = self.heap[c];
            self.hpos[self.heap[i] as usize] = i as u32;
            i = c;
        }
        self.heap[i] = x;
        self.hpos[x as usize] = i as u32;
    }

    pub(super) fn heap_insert(&mut self, v: u32) {
        if self.hpos[v as usize] != NONE {
            return;
        }
        self.heap.push(v);
        let i = self.heap.len() - 1;
        self.hpos[v as usize] = i as u32;
        self.heap_up(i);
    }

    pub(super) fn heap_pop(&mut self) -> Option<u32> {
        let top = *self.heap.first()?;
        let last = self.heap.pop()?;
        self.hpos[top as usize] = NONE;
        if !self.heap.is_empty() {
            self.heap[0] = last;
            self.hpos[last as usize] = 0;
            self.heap_down(0);
        }
        Some(top)
    }
}
