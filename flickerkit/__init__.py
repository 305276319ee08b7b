"""flickerkit: temporal light modulation analysis for dimmable LED lighting.

The package is layered (see DEVELOPERS.md): pure computation on numpy arrays at
the core (periodicity, spectrum, metrics, ieee1789, ...), one assessment that
runs them for a :class:`~flickerkit.capture.Capture`, and readers, exports and the
command line at the edges. Importing the package is cheap; heavy libraries are
imported by the functions that need them.
"""

__version__ = "0.1.0"

__all__ = ["__version__"]
