//! plethwire firmware for STM32F411CE boards ("black pill" style, 25 MHz
//! crystal): an IR LED and a photodetector front end sampled 250 times a
//! second with ambient cancelling, LED drive kept in range, the beat
//! pipeline on the device, and frames (`plethwire_dsp::wire`) out of
//! USART1 at 115200 baud. Logs go over RTT (defmt).
//!
//! Everything but register access lives in `plethwire-board` and is tested
//! on the PC; this crate sets up the peripherals and moves bytes.
//!
//! # Pin map
//!
//! | pin | function | to |
//! |---|---|---|
//! | PA1 | ADC1 channel 1 | front end output, 0–3.3 V |
//! | PA6 | TIM3 channel 1, PWM 20 kHz | LED drive level (RC-filter it into the current source's set input) |
//! | PB0 | push-pull output, high = on | LED enable (switches the current source) |
//! | PA9 | USART1 TX | the host's serial adapter RX |
//! | PA10 | USART1 RX | reserved (the adapter's TX), not used yet |
//! | PC13 | on-board LED, low = lit | toggles with every beat |
//! | PA13, PA14 | SWDIO, SWCLK | debug probe (with GND, 3V3, NRST) |
//!
//! TIM5 is embassy's time driver (the sample timer); DMA2 stream 7 feeds
//! USART1's transmitter.

#![no_std]
#![no_main]

mod clocks;
mod photo;

use defmt_rtt as _;
use embassy_executor::Spawner;
use embassy_stm32::adc::Adc;
use embassy_stm32::gpio::{Level, Output, OutputType, Speed};
use embassy_stm32::mode::Async;
use embassy_stm32::time::Hertz;
use embassy_stm32::timer::simple_pwm::{PwmPin, SimplePwm};
use embassy_stm32::usart::{self, UartTx};
use embassy_stm32::{bind_interrupts, dma, peripherals};
use embassy_time::{Delay, TICK_HZ};
use plethwire_board::{BoardConfig, Hardware};

use photo::Photo;

// SAMPLE_RATE_HZ (src/rate.rs), and BAND, the pipeline's filters that
// build.rs designs for it.
include!("rate.rs");
include!(concat!(env!("OUT_DIR"), "/band.rs"));
/// USART1 baud rate: 100 MHz / 115200 divides to 54.25 exactly, and every
/// USB serial adapter takes it. Sample blocks, beats, states and status
/// need about 2.4 kB/s of its 11.5 kB/s at 250 Hz (docs/wire-format.md,
/// "Bandwidth").
const BAUD: u32 = 115_200;
/// LED drive PWM frequency: far above the front end's band, and 5000 steps
/// of duty from TIM3's 100 MHz clock.
const PWM_HZ: u32 = 20_000;

bind_interrupts!(struct Irqs {
    DMA2_STREAM7 => dma::InterruptHandler<peripherals::DMA2_CH7>;
});

#[embassy_executor::main]
async fn main(_spawner: Spawner) {
    let p = embassy_stm32::init(clocks::config());
    defmt::info!(
        "plethwire {} on STM32F411CE at {} Hz",
        env!("CARGO_PKG_VERSION"),
        clocks::SYSCLK_HZ
    );

    let pwm = SimplePwm::new(
        p.TIM3,
        Some(PwmPin::new(p.PA6, OutputType::PushPull)),
        None,
        None,
        None,
        Hertz(PWM_HZ),
        Default::default(),
    );
    let mut drive = pwm.split().ch1;
    drive.enable();
    let hw = Hardware {
        led: Output::new(p.PB0, Level::Low, Speed::Low),
        drive,
        adc: Photo::new(Adc::new(p.ADC1), p.PA1),
        delay: Delay,
    };
    let mut uart = usart::Config::default();
    uart.baudrate = BAUD;
    let mut tx: UartTx<'static, Async> = match UartTx::new(p.USART1, p.PA9, p.DMA2_CH7, Irqs, uart)
    {
        Ok(tx) => tx,
        Err(e) => defmt::panic!("USART1 setup: {}", e),
    };
    let mut config = BoardConfig::new(SAMPLE_RATE_HZ, TICK_HZ);
    config.firmware_version = plethwire_embassy::firmware_version!();
    let beat_led = Output::new(p.PC13, Level::High, Speed::Low);
    let board = plethwire_embassy::board(config, &BAND, hw);
    plethwire_embassy::run(&board, beat_led, async |bytes: &[u8]| tx.write(bytes).await).await
}
