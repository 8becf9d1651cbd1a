"""Check stillpoint's physical constants against astropy.constants.

Reads a JSON object of our values on stdin. astropy (Astropy Collaboration
2022, ApJ 935, 167) keeps CODATA 2018 (astropy.constants.codata2018) for G, k_B, m_u and
the IAU 2015 Resolution B3 nominal solar values (astropy.constants.iau2015); the au is the IAU 2012 B2 exact value.
Exits non-zero on any disagreement.
"""
import json
import sys

try:
    from astropy import units as u
    from astropy.constants import codata2018 as cd
    from astropy.constants import iau2015 as ia
except ImportError:
    sys.exit("astropy is missing: .ci/run installs it with `pip install astropy`")

ours = json.load(sys.stdin)
ref = {
    "G_SI": (cd.G.si.value, cd.G.reference),
    "K_B_SI": (cd.k_B.si.value, cd.k_B.reference),
    "M_U_SI": (cd.u.si.value, cd.u.reference),
    "GM_SUN_SI": (ia.GM_sun.si.value, ia.GM_sun.reference),
    "AU_SI": (ia.au.si.value, ia.au.reference),
    "M_SUN_SI": (ia.M_sun.si.value, ia.M_sun.reference),
    "YEAR_SI": ((1 * u.yr).to(u.s).value, "astropy Julian year"),
    "cgs_G": (cd.G.cgs.value, cd.G.reference),
    "astro_G": (
        (cd.G * ia.M_sun * (1 * u.yr) ** 2 / ia.au**3).decompose().value,
        "G in au^3 Msun^-1 yr^-2 from CODATA 2018 and IAU 2015",
    ),
}
bad = 0
for key, (want, source) in ref.items():
    got = ours[key]
    r = abs(got - want) / abs(want)
    ok = r < 1e-14
    bad += not ok
    print(f"{key:10s} ours {got:.16e} astropy {want:.16e} rel {r:.1e} {'ok' if ok else 'DIFFERS'}  ({source})")
print(f"constants: {len(ref)} checked, {bad} disagreements")
sys.exit(1 if bad else 0)
