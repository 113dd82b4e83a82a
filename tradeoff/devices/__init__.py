"""Device laws: pure, vectorised functions and small value objects, one module per device.

Arrays in, arrays out, SI units in the names (`_v`, `_a`, `_ohm`, `_f`, `_s`, `_c` for degC); each
function's docstring names the published source of its law. Topology modules compose these laws;
they hold no device physics of their own.

- `capacitor`: value band, electrolytic leakage (voltage and temperature), insulation of film and
  ceramic parts, the leakage level between none, typical and the datasheet limit, RC discharge
- `junction`: thermal voltage, base-emitter diode law, Darlington base current and hold time, hFE
- `mosfet`: square law, threshold point, K against temperature, on-state drop
- `relay`: release current, coil resistance against temperature, linear-region dissipation
- `oscillator`: two-inverter RC oscillator, tuning-fork crystal, trimmed on-chip RC boxes
- `comparator`: threshold divider with hysteresis, 555-class monostable width
- `schmitt`: emitter-coupled two-transistor Schmitt trigger (transfer curve, trip points), RC charge to a
  trip point against an extra current
- `supply_current`: IC and regulator quiescent currents read at the supply
- `start`: push-button and power-on PNP start of a hold, power-on reset release
- `quadrature`: Gauss–Legendre discharge integrals, chunked evaluation of long sample arrays
- `life`: electrolytic endurance against a service life (10 K rule), crystal ageing past the first
  year (log law), board-surface leakage as a conductance
"""
