//! Clock tree: the board's 25 MHz crystal (HSE) through the main PLL to a
//! 100 MHz system clock, the STM32F411's maximum.
//!
//! PLL input 25 MHz / M 25 = 1 MHz (the part accepts 0.95–2.1 MHz), VCO
//! 1 MHz · N 400 = 400 MHz (100–432 MHz), system clock 400 MHz / P 4 =
//! 100 MHz. AHB 100 MHz; APB1 50 MHz (its limit; its timers, TIM3 and
//! TIM5, run at twice that); APB2 100 MHz (USART1, ADC1 at PCLK2 / 4 =
//! 25 MHz). The PLL's Q output (USB) is off: no 48 MHz is possible from
//! a 400 MHz VCO, and nothing here uses USB. embassy-stm32 sets the flash
//! wait states and voltage scale for the result.

use embassy_stm32::rcc::{
    AHBPrescaler, APBPrescaler, Hse, HseMode, Pll, PllMul, PllPDiv, PllPreDiv, PllSource, Sysclk,
};
use embassy_stm32::time::Hertz;
use embassy_stm32::Config;

/// The crystal on the board, Hz.
pub const HSE_HZ: u32 = 25_000_000;
const PLL_M: PllPreDiv = PllPreDiv::DIV25;
const PLL_N: PllMul = PllMul::MUL400;
const PLL_P: PllPDiv = PllPDiv::DIV4;

// The register codes give the factors back (P is coded as P/2 − 1), so the
// frequencies below follow from the very values programmed.
const M: u32 = PLL_M.to_bits() as u32;
const N: u32 = PLL_N.to_bits() as u32;
const P: u32 = 2 * (PLL_P.to_bits() as u32 + 1);
const VCO_IN_HZ: u32 = HSE_HZ / M;
const VCO_HZ: u32 = VCO_IN_HZ * N;
/// The system clock, Hz.
pub const SYSCLK_HZ: u32 = VCO_HZ / P;

const _: () = assert!(VCO_IN_HZ >= 950_000 && VCO_IN_HZ <= 2_100_000);
const _: () = assert!(VCO_HZ >= 100_000_000 && VCO_HZ <= 432_000_000);
const _: () = assert!(SYSCLK_HZ == 100_000_000);

/// The HAL configuration for this clock tree.
pub fn config() -> Config {
    let mut config = Config::default();
    let rcc = &mut config.rcc;
    rcc.hse = Some(Hse {
        freq: Hertz(HSE_HZ),
        mode: HseMode::Oscillator,
    });
    rcc.pll_src = PllSource::HSE;
    rcc.pll = Some(Pll {
        prediv: PLL_M,
        mul: PLL_N,
        divp: Some(PLL_P),
        divq: None,
        divr: None,
    });
    rcc.sys = Sysclk::PLL1_P;
    rcc.ahb_pre = AHBPrescaler::DIV1;
    rcc.apb1_pre = APBPrescaler::DIV2;
    rcc.apb2_pre = APBPrescaler::DIV1;
    config
}
