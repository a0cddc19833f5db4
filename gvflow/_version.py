"""The package version (read by the build, the command line and ``gvflow.__version__``)."""

__version__ = "0.1.0"
