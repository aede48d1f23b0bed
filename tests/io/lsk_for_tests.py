"""Leap-seconds kernel text written by the io tests themselves (no downloads).

TAI - UTC values and dates: IERS Bulletin C (history table of leap seconds, 1972-2017; last
leap second at the end of 2016-12-31, TAI - UTC = 37 s from 2017-01-01). DELTET constants: the
values of the NAIF generic LSK naif0012.tls (NAIF Time Required Reading; from memory).
"""

IERS_BULLETIN_C = [
    ("1972-JAN-1", 10), ("1972-JUL-1", 11), ("1973-JAN-1", 12), ("1974-JAN-1", 13), ("1975-JAN-1", 14),
    ("1976-JAN-1", 15), ("1977-JAN-1", 16), ("1978-JAN-1", 17), ("1979-JAN-1", 18), ("1980-JAN-1", 19),
    ("1981-JUL-1", 20), ("1982-JUL-1", 21), ("1983-JUL-1", 22), ("1985-JUL-1", 23), ("1988-JAN-1", 24),
    ("1990-JAN-1", 25), ("1991-JAN-1", 26), ("1992-JUL-1", 27), ("1993-JUL-1", 28), ("1994-JUL-1", 29),
    ("1996-JAN-1", 30), ("1997-JUL-1", 31), ("1999-JAN-1", 32), ("2006-JAN-1", 33), ("2009-JAN-1", 34),
    ("2012-JUL-1", 35), ("2015-JUL-1", 36), ("2017-JAN-1", 37),
]


def lsk_text() -> str:
    rows = "\n".join(f"    {dat}, @{date}" for date, dat in IERS_BULLETIN_C)
    return (
        "KPL/LSK\n\nTest leap-seconds kernel (IERS Bulletin C table).\n\n\\begindata\n\n"
        "DELTET/DELTA_T_A = 32.184\n"
        "DELTET/K = 1.657D-3\n"
        "DELTET/EB = 1.671D-2\n"
        "DELTET/M = ( 6.239996D0 1.99096871D-7 )\n"
        f"DELTET/DELTA_AT = (\n{rows} )\n\n\\begintext\n"
    )
