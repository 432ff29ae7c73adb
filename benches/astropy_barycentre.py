"""The reference side of `cargo bench --bench barycentre_table`: the same table corrected to
BJD_TDB with astropy (a general-purpose library), whole process: read the CSV, correct,
write the CSV. Invoked by the bench with the input, the output, the SPK kernel, the site
and the source; prints one line `astropy <version> rows <n>` on success.

Usage: python benches/astropy_barycentre.py INPUT OUTPUT KERNEL LON_DEG LAT_DEG HEIGHT_M RA_DEG DEC_DEG

The time column is JD UTC text; it is split into whole and fractional days so that astropy
keeps sub-microsecond precision. Earth orientation: astropy's bundled IERS tables, no
download (skyclock's run assumes UT1 = UTC; the two differ by ≤ 1.5 µs in light time).
"""
import sys

import numpy as np
import astropy
import astropy.units as u
from astropy.coordinates import EarthLocation, SkyCoord
from astropy.table import Table
from astropy.time import Time
from astropy.utils import iers

iers.conf.auto_download = False
iers.conf.auto_max_age = None

inp, out, kernel = sys.argv[1], sys.argv[2], sys.argv[3]
lon, lat, height, ra, dec = (float(x) for x in sys.argv[4:9])

table = Table.read(inp, format="ascii.csv", converters={"time": str})
text = np.asarray(table["time"], dtype=str)
whole = np.array([float(s.split(".")[0]) for s in text])
fraction = np.array([float("0." + s.split(".")[1]) if "." in s else 0.0 for s in text])
site = EarthLocation.from_geodetic(lon * u.deg, lat * u.deg, height * u.m)
times = Time(whole, fraction, format="jd", scale="utc", location=site)
source = SkyCoord(ra * u.deg, dec * u.deg, frame="icrs")
light_time = times.light_travel_time(source, kind="barycentric", ephemeris=kernel)
tdb = times.tdb
bjd = tdb + light_time
table["bjd_tdb_jd1"] = bjd.jd1
table["bjd_tdb_jd2"] = bjd.jd2
tt = times.tt
table["einstein_delay_s"] = ((tdb.jd1 - tt.jd1) + (tdb.jd2 - tt.jd2)) * 86400.0
table["light_time_s"] = light_time.to_value(u.s)
table.write(out, format="ascii.csv", overwrite=True)
print(f"astropy {astropy.__version__} rows {len(table)}")
