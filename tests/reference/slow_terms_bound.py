"""Error bound of the slow-term nodes (src/arrival/slow_terms.rs).

Sums the 8-point Lagrange remainder bound 1.07e-3 * A * (omega h)^8 (2*A where omega h >= 2)
over every term of the IAU 2000A nutation series and of the Fairhead & Bretagnon TDB - TT
series, as tabulated in the sofars 0.6.3 crate (src/pnp/nut00a.rs, src/ts/dtdb.rs), for a
node spacing h of 0.5 d. Fundamental-argument rates: IERS Conventions 2003 / SOFA iauFa*
(Simon et al. 1994), as in nut00a.rs. Terms in t^n of the TDB series use |t| <= 0.15
Julian millennia. Usage: python3 slow_terms_bound.py ~/.cargo/registry/src/*/sofars-0.6.3
"""
import math
import re
import sys

root = sys.argv[1]
LAGRANGE = 43.07 / 40320.0  # max |prod_{j=-3..4}(u - j)| / 8! on u in [0, 1]
H_DAYS = 1.0


def remainder(amplitude, omega_h):
    return LAGRANGE * amplitude * omega_h**8 if omega_h < 2.0 else 2.0 * amplitude


nut = open(f"{root}/src/pnp/nut00a.rs").read()
ls = re.findall(r"Lscof\(([^)]*)\)", nut[nut.index("const XLS") : nut.index("struct Plcof")])
pl = re.findall(r"Plcof\(([^)]*)\)", nut[nut.index("const XPL") :])
ls = [[float(x) for x in r.split(",") if x.strip()] for r in ls]
pl = [[float(x) for x in r.split(",") if x.strip()] for r in pl]
arcsec = math.pi / 180 / 3600
u2r = arcsec / 1e7  # 0.1 microarcsecond
ls_rates = [x * arcsec for x in (1717915923.2178, 129596581.0481, 1739527262.8478, 1602961601.2090, -6962890.5431)]
pl_rates = [8328.6914269554, 8433.466158131, 7771.3771468121, -33.757045, 2608.7903141574, 1021.3285546211,
            628.3075849991, 334.0612426700, 52.9690962641, 21.3299104960, 7.4781598567, 3.8133035638, 0.02438175]
h_century = H_DAYS / 36525.0
nutation = 0.0
for r in ls:
    omega = abs(sum(a * b for a, b in zip(r[:5], ls_rates)))
    amplitude = (abs(r[5]) + 0.3 * abs(r[6]) + abs(r[7]) + abs(r[8]) + 0.3 * abs(r[9]) + abs(r[10])) * u2r
    nutation += remainder(amplitude, omega * h_century)
for r in pl:
    omega = abs(sum(a * b for a, b in zip(r[:13], pl_rates)))
    nutation += remainder(sum(abs(v) for v in r[13:17]) * u2r, omega * h_century)
print(f"nutation: {len(ls) + len(pl)} terms, bound {nutation:.2e} rad = {nutation * 0.0213:.2e} s on a 21.3 ms lever")

dtdb = open(f"{root}/src/ts/dtdb.rs").read()
rows = re.findall(r"\[\s*([-0-9.e]+)\s*,\s*([-0-9.e]+)\s*,\s*([-0-9.e]+)\s*\]", dtdb[dtdb.index("FAIRHD") :])[:787]
h_millennium = H_DAYS / 365250.0
tdb = 0.0
for j, (a, omega, _) in enumerate(rows):
    power = 0 if j < 474 else 1 if j < 679 else 2 if j < 764 else 3 if j < 784 else 4
    tdb += remainder(abs(float(a)) * 0.15**power, float(omega) * h_millennium)
print(f"TDB - TT: {len(rows)} terms, bound {tdb:.2e} s")
