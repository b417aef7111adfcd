"""Dry deposition: gases (resistance model) and particles (size-resolved scheme).

Entry point: :func:`velocities` (met, surfaces, options) -> Dataset of Vd and every
resistance per (site, receptor, time); options in :class:`DryOptions`.

Modules
-------
gas          Rb, Vd and the interface of surface-resistance schemes
wesely1989   Wesely (1989) / Walmsley and Wesely (1996) Rc
particles    Zhang et al. (2001) size-resolved particle Vd, log-normal mass weighting
seasons      Wesely's seasonal category from surface state, month and latitude
wetness      surface wetness from the met file or the rain/dew rule
options      DryOptions, LogNormalMode, ParticleSpec and their defaults
core         velocities()
core_steps   the codes, the hours counted, the velocity steps of the graph
core_hourly  the hourly block of velocities()
"""
from .core import velocities
from .options import DryOptions, LogNormalMode, ParticleSpec, default_particle_modes

__all__ = ["velocities", "DryOptions", "LogNormalMode", "ParticleSpec", "default_particle_modes"]
