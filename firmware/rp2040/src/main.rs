//! plethwire firmware for the Raspberry Pi Pico (RP2040, 12 MHz crystal,
//! run at 125 MHz): an IR LED and a photodetector front end sampled 250
//! times a second with ambient cancelling, LED drive kept in range, the
//! beat pipeline on the device, and frames (`plethwire_dsp::wire`) out of
//! UART0 at 115200 baud. Logs go over RTT (defmt) when a debug probe is
//! attached.
//!
//! Everything but register access lives in `plethwire-board` and is tested
//! on the PC; this crate sets up the peripherals and moves bytes. The
//! Cortex-M0+ has no FPU: the pipeline runs in compiler-builtins' soft
//! float, bit for bit what an FPU would compute.
//!
//! # Pin map (GPn, Pico header pin)
//!
//! | pin | function | to |
//! |---|---|---|
//! | GP26, 31 | ADC input 0 | front end output, 0–3.3 V (ADC_VREF, pin 35) |
//! | GP14, 19 | PWM slice 7 A, 20 kHz | LED drive level (RC-filter it into the current source's set input) |
//! | GP15, 20 | push-pull output, high = on | LED enable (switches the current source) |
//! | GP0, 1 | UART0 TX | the host's serial adapter RX |
//! | GP1, 2 | UART0 RX | reserved (the adapter's TX), not used yet |
//! | GP25 | on-board LED, high = lit | toggles with every beat |
//! | GP23 | SMPS mode, held high | the Pico's regulator in PWM mode: less ripple on the ADC |
//! | SWCLK, SWDIO | debug header | debug probe (with its GND) |
//!
//! The TIMER peripheral is embassy's time driver (the sample timer, 1 MHz);
//! DMA channel 0 feeds UART0's transmitter.

#![no_std]
#![no_main]

mod photo;

use defmt_rtt as _;
use embassy_executor::Spawner;
use embassy_rp::adc::{self, Adc, Channel};
use embassy_rp::clocks::clk_sys_freq;
use embassy_rp::gpio::{Level, Output, Pull};
use embassy_rp::peripherals::DMA_CH0;
use embassy_rp::pwm::{self, Pwm};
use embassy_rp::uart::{self, Async, UartTx};
use embassy_rp::{bind_interrupts, dma};
use embassy_time::{Delay, TICK_HZ};
use plethwire_board::{BoardConfig, Hardware};

use photo::Photo;

// SAMPLE_RATE_HZ (src/rate.rs), and BAND, the pipeline's filters that
// build.rs designs for it.
include!("rate.rs");
include!(concat!(env!("OUT_DIR"), "/band.rs"));
/// UART0 baud rate: from the 125 MHz peripheral clock the divider is
/// 67 + 52/64, 0.006 % fast, and every USB serial adapter takes it. Sample
/// blocks, beats, states and status need about 2.4 kB/s of its 11.5 kB/s
/// at 250 Hz (docs/wire-format.md, "Bandwidth").
const BAUD: u32 = 115_200;
/// LED drive PWM frequency: far above the front end's band, and 6250 steps
/// of duty from the 125 MHz system clock.
const PWM_HZ: u32 = 20_000;

bind_interrupts!(struct Irqs {
    DMA_IRQ_0 => dma::InterruptHandler<DMA_CH0>;
});

#[embassy_executor::main]
async fn main(_spawner: Spawner) {
    // The default configuration: the 12 MHz crystal, the system PLL to
    // 125 MHz (system and peripheral clocks), the USB PLL to 48 MHz (ADC).
    let p = embassy_rp::init(Default::default());
    defmt::info!(
        "plethwire {} on RP2040 at {} Hz",
        env!("CARGO_PKG_VERSION"),
        clk_sys_freq()
    );
    // Pico datasheet, "Using the ADC": the regulator's power-save mode
    // ripples the 3.3 V rail that ADC_VREF is filtered from; PWM mode costs
    // a few mA at light load and ripples far less.
    let _smps_pwm = Output::new(p.PIN_23, Level::High);

    let mut pwm_config = pwm::Config::default();
    pwm_config.top = match u16::try_from(clk_sys_freq() / PWM_HZ - 1) {
        Ok(top) => top,
        Err(_) => defmt::panic!("PWM period does not fit the counter"),
    };
    let drive = match Pwm::new_output_a(p.PWM_SLICE7, p.PIN_14, pwm_config).split() {
        (Some(drive), _) => drive,
        (None, _) => defmt::panic!("PWM channel A missing"),
    };
    let hw = Hardware {
        led: Output::new(p.PIN_15, Level::Low),
        drive,
        adc: Photo::new(
            Adc::new_blocking(p.ADC, adc::Config::default()),
            Channel::new_pin(p.PIN_26, Pull::None),
        ),
        delay: Delay,
    };
    let mut uart = uart::Config::default();
    uart.baudrate = BAUD;
    let mut tx: UartTx<'static, Async> = UartTx::new(p.UART0, p.PIN_0, p.DMA_CH0, Irqs, uart);
    let mut config = BoardConfig::new(SAMPLE_RATE_HZ, TICK_HZ);
    config.firmware_version = plethwire_embassy::firmware_version!();
    let beat_led = Output::new(p.PIN_25, Level::Low);
    let board = plethwire_embassy::board(config, &BAND, hw);
    plethwire_embassy::run(&board, beat_led, async |bytes: &[u8]| tx.write(bytes).await).await
}
