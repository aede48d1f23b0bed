"""Physical constants and unit conversions used throughout induct (SI inside)."""

import math

#: Vacuum permeability (H/m). The conventional value 4 pi 1e-7 is used, as in the
#: induction literature; the CODATA 2018 value differs by 5.5e-10 relative.
MU0 = 4.0e-7 * math.pi

SECONDS_PER_HOUR = 3600.0
METRES_PER_KM = 1000.0

#: Newtonian constant of gravitation (m^3 kg^-1 s^-2), CODATA 2018 (Tiesinga et al. 2021, Rev. Mod. Phys. 93, 025010).
G = 6.67430e-11

#: What the model leaves out, in one sentence: shown beside every result (figure captions, command output,
#: report, file metadata). Plain text, so any module can import it without a plotting library.
MODEL_LIMITS = (
    "Spherically symmetric quasi-static induction only: no plasma interaction, asymmetric shells or motional "
    "induction."
)
