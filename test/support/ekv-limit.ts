/**
 * The strong-inversion limit of an EKV card with γ = θ = σ = λ = 0 and no velocity saturation (n = 1,
 * VP = VGS − Vt0), in saturation: from 2q + ln q = VOV/UT and i = q² + q (charge-based EKV, Enz & Vittoz,
 * Charge-Based MOS Transistor Modeling, Wiley, 2006, from memory),
 * ID = β/2·((VOV − UT·(ln q − 1))² − UT²) exactly — the square law β/2·VOV², short by the charge-sheet
 * term UT·(ln q − 1) (the surface potential keeps rising by UT·ln q above pinch-off).
 */
import { ekvForwardCharge } from "../../lib/formulas/ekv.formulas.js";

export function ekvStrongInversionCurrent(beta: number, vov: number, ut: number): number {
  const q = ekvForwardCharge.fn(vov as never, 0 as never, ut as never);
  return (beta / 2) * ((vov - ut * (Math.log(q) - 1)) ** 2 - ut * ut);
}
