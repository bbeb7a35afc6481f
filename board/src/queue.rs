//! A fixed-size byte queue of encoded frames for the UART.
//!
//! Frames go in whole or not at all (a dropped frame is counted, and the
//! host sees the gap in sequence numbers); bytes come out in any amount,
//! because the line is a byte stream and a DMA transfer may end in the
//! middle of a frame. Bytes rather than frame slots: a beat frame is 56
//! bytes and the largest frame 147, so slots would waste most of the RAM.

/// The queue, `N` bytes.
///
/// Hand-written rather than a `heapless::Deque<u8, N>`: measured on the
/// real board's release image (`scripts/check-budgets`, `N` = 512) the
/// deque saved 600 bytes of flash (65 116 → 64 516) but took 8 more bytes
/// of static RAM (12 960 → 12 968: its front, back and full flag are four
/// bytes more than `head` and `len`, and the board's task rounds up to 8),
/// and the board's RAM must not grow.
#[derive(Clone, Debug)]
pub struct FrameQueue<const N: usize> {
    buf: [u8; N],
    head: usize,
    len: usize,
    queued: u32,
    dropped: u32,
}

impl<const N: usize> Default for FrameQueue<N> {
    fn default() -> Self {
        Self::new()
    }
}

impl<const N: usize> FrameQueue<N> {
    /// Empty.
    pub const fn new() -> Self {
        const { assert!(N > 0, "a frame queue needs room") };
        Self {
            buf: [0; N],
            head: 0,
            len: 0,
            queued: 0,
            dropped: 0,
        }
    }

    /// Capacity, bytes.
    pub const fn capacity(&self) -> usize {
        N
    }

    /// Bytes waiting.
    pub fn len(&self) -> usize {
        self.len
    }

    /// Nothing waiting?
    pub fn is_empty(&self) -> bool {
        self.len == 0
    }

    /// Room left, bytes.
    pub fn free(&self) -> usize {
        N - self.len
    }

    /// Queue `frame` whole; `false` (and one more dropped frame) when it
    /// does not fit.
    pub fn push_frame(&mut self, frame: &[u8]) -> bool {
        if frame.len() > self.free() {
            self.dropped = self.dropped.saturating_add(1);
            return false;
        }
        let tail = (self.head + self.len) % N;
        let first = frame.len().min(N - tail);
        self.buf[tail..tail + first].copy_from_slice(&frame[..first]);
        self.buf[..frame.len() - first].copy_from_slice(&frame[first..]);
        self.len += frame.len();
        self.queued = self.queued.saturating_add(1);
        true
    }

    /// Move up to `out.len()` of the oldest bytes into `out`; returns how
    /// many.
    pub fn pop_into(&mut self, out: &mut [u8]) -> usize {
        let n = out.len().min(self.len);
        let first = n.min(N - self.head);
        out[..first].copy_from_slice(&self.buf[self.head..self.head + first]);
        out[first..n].copy_from_slice(&self.buf[..n - first]);
        self.head = (self.head + n) % N;
        self.len -= n;
        n
    }

    /// Frames queued since the start.
    pub fn frames_queued(&self) -> u32 {
        self.queued
    }

    /// Frames dropped because the queue was full, since the start.
    pub fn dropped(&self) -> u32 {
        self.dropped
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::vec::Vec;

    fn drain<const N: usize>(q: &mut FrameQueue<N>, chunk: usize) -> Vec<u8> {
        let mut all = Vec::new();
        let mut buf = vec![0u8; chunk];
        loop {
            let n = q.pop_into(&mut buf);
            if n == 0 {
                return all;
            }
            all.extend_from_slice(&buf[..n]);
        }
    }

    #[test]
    fn frames_come_out_in_order_across_the_wrap() {
        let mut q = FrameQueue::<10>::new();
        assert!(q.push_frame(&[1, 2, 3, 0]));
        assert!(q.push_frame(&[4, 5, 0]));
        let mut out = [0u8; 5];
        assert_eq!(q.pop_into(&mut out), 5);
        assert_eq!(out, [1, 2, 3, 0, 4]);
        // Head at 5, two bytes left: this frame wraps around the end.
        assert!(q.push_frame(&[6, 7, 8, 9, 10, 11, 0]));
        assert_eq!(q.len(), 9);
        assert_eq!(drain(&mut q, 3), [5, 0, 6, 7, 8, 9, 10, 11, 0]);
        assert!(q.is_empty());
        assert_eq!(q.frames_queued(), 3);
        assert_eq!(q.dropped(), 0);
    }

    #[test]
    fn a_frame_that_does_not_fit_is_dropped_whole_and_counted() {
        let mut q = FrameQueue::<8>::new();
        assert!(q.push_frame(&[1, 1, 1, 0]));
        assert!(q.push_frame(&[2, 2, 0]));
        assert!(!q.push_frame(&[3, 3, 0]), "3 bytes, 1 free");
        assert!(!q.push_frame(&[4; 9]), "larger than the queue");
        assert!(q.push_frame(&[5]), "a frame that fits still goes in");
        assert_eq!(q.dropped(), 2);
        assert_eq!(q.free(), 0);
        assert_eq!(drain(&mut q, 64), [1, 1, 1, 0, 2, 2, 0, 5]);
    }

    #[test]
    fn popping_an_empty_queue_gives_nothing() {
        let mut q = FrameQueue::<4>::new();
        let mut out = [9u8; 4];
        assert_eq!(q.pop_into(&mut out), 0);
        assert_eq!(out, [9; 4]);
        assert_eq!(q.capacity(), 4);
    }
}
