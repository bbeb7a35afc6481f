//! The serial link: bytes from the board's transmit queue out of USART1 by
//! DMA, while the sampler goes on.

use core::cell::RefCell;

use embassy_stm32::mode::Async;
use embassy_stm32::usart::UartTx;
use embassy_sync::blocking_mutex::raw::NoopRawMutex;
use embassy_sync::signal::Signal;

use crate::Front;

/// Bytes per DMA transfer: 5.6 ms of line at 115200 baud, so new frames
/// wait little behind a transfer in flight.
const CHUNK: usize = 64;

/// Send whatever is queued; sleep on `queued` when nothing is.
pub async fn send(
    board: &RefCell<Front>,
    queued: &Signal<NoopRawMutex, ()>,
    mut tx: UartTx<'_, Async>,
) -> ! {
    let mut chunk = [0u8; CHUNK];
    loop {
        // The borrow ends before the await: the sampler needs the board
        // while the transfer runs.
        let n = board.borrow_mut().queue_mut().pop_into(&mut chunk);
        if n == 0 {
            queued.wait().await;
            continue;
        }
        if let Err(e) = tx.write(&chunk[..n]).await {
            defmt::warn!("UART transmit failed: {}", e);
        }
    }
}
