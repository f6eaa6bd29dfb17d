"""Conductivity of wire materials, for conductor loss in the wire model.

``MATERIALS[name]`` is the conductivity in S/m used for the skin-effect loss
of the radiator (``None``: lossless, no loss applied).  Keys are the names
allowed in a design file (``necflow.config.schema.WIRE_MATERIALS``).  The
solver treats every material as non-magnetic (mu = mu0).
"""

from __future__ import annotations

#: Conductivity [S/m] per wire material; ``None`` means lossless.
MATERIALS: dict[str, float | None] = {
    # Annealed copper, 100 % IACS = 58.0 MS/m at 20 degC; from memory of the
    # CRC Handbook of Chemistry and Physics (resistivity of the elements).
    "copper": 5.80e7,
    # Hard-drawn copper wire, about 97 % IACS; from memory of ASTM B1
    # (hard-drawn copper wire).
    "hard-drawn-copper": 5.63e7,
    # Wire-grade aluminium (EC grade), about 61 % IACS = 35.4 MS/m; from
    # memory of the CRC Handbook (pure aluminium 37.7 MS/m) and ASTM B230.
    "aluminium": 3.54e7,
    # Copper-clad steel: effective HF value, set equal to hard-drawn copper
    # (the cladding is drawn copper).  Its DC conductivity is only 30-40 %
    # IACS, but RF current flows in a skin of depth 1/sqrt(pi f mu0 sigma):
    # 49 um in copper at 1.8 MHz, 12 um at 30 MHz [derived].  A 40 % IACS
    # cladding is roughly 0.1 of the radius thick (about 100 um on a 2 mm
    # wire), several skin depths, so the steel core carries almost no HF
    # current and the loss is that of a copper wire.  Below about 2 MHz on
    # thin claddings this underestimates the loss.  Skin-depth formula: from
    # memory of Ramo, Whinnery and Van Duzer, Fields and Waves in
    # Communication Electronics, ch. 3.
    "copper-clad-steel": 5.63e7,
    # Austenitic stainless steel (type 304), resistivity about 72 uOhm cm;
    # from memory of the CRC Handbook / ASM metals data.  Treated as
    # non-magnetic; cold-worked wire is slightly magnetic and lossier.
    "stainless-steel": 1.39e6,
    # No conductor loss (ideal conductor).
    "lossless": None,
}
