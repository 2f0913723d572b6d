"""Physical constants [SI]."""

#: molar gas constant [J mol^-1 K^-1], CODATA 2018 (exact, k * N_A)
R = 8.314462618
#: molar mass of water [kg/mol] (IAPWS-95 value 18.015268 g/mol)
M_WATER = 0.018015268
#: 0 °C [K]
T0 = 273.15
#: cryoscopic constant used by freezing-point osmometers [K kg/mol] (osmolality = FPD / 1.858)
K_F_OSMOMETER = 1.858
