"""hipeq: chemical reaction equilibrium of gas mixtures at high pressure with real-gas fugacity corrections."""
__version__ = "0.1.0"
