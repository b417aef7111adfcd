"""Surface layer: stability functions, roughness, u* and L, aerodynamic resistance.

Modules
-------
stability        Paulson (1970) and Beljaars-Holtslag (1991) integrated functions
roughness        z0 and d of our land-use classes; Charnock relation over water
aerodynamic      wind profile, blending-height transfer of u*, Ra, floor and cap
energy_balance   Holtslag-van Ulden (1983) day, van Ulden-Holtslag (1985) and
                 Venkatram (1980) night: u* and 1/L from routine meteorology
solar            Spencer (1971) solar geometry
air              air density, viscosity, mean free path, humidity
"""
from .aerodynamic import aerodynamic_resistance, reference_height, transfer_ustar
from .stability import psi_h, psi_m

__all__ = ["aerodynamic_resistance", "reference_height", "transfer_ustar", "psi_h", "psi_m"]
