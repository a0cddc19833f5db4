"""Hand-written references shared by several test files (no gvflow inside)."""

from __future__ import annotations

G = 9.80665


def compound_zones(y):
    """(area, Manning conveyance) of each zone of the compound section of the tests above bankfull: a 10 m main
    channel 2 m deep (n 0.03, walls wetted up to the banks) between two 100 m floodplains (n 0.05, outer walls
    wetted), division lines not wetted; exact for these rectangles, K_i = A_i^(5/3) / (n_i P_i^(2/3))."""
    h = y - 2.0
    return [(a, a ** (5 / 3) / (n * p ** (2 / 3))) for a, p, n in
            ((10.0 * y, 14.0, 0.03), (100.0 * h, 100.0 + h, 0.05), (100.0 * h, 100.0 + h, 0.05))]


def compound_energy_and_conveyance(y, q, g=G):
    """Specific energy y + alpha Q²/(2 g A²) with alpha = sum(K_i³/A_i²)/(K³/A²) (Chow 1959, §2-7), and the
    total conveyance K, of that section at depth y > 2 m for discharge q."""
    zones = compound_zones(y)
    a, k = sum(z[0] for z in zones), sum(z[1] for z in zones)
    alpha = sum(ki ** 3 / ai ** 2 for ai, ki in zones) / (k ** 3 / a ** 2)
    return y + alpha * q * q / (2 * g * a * a), k
