"""necflow: design, model and tune HF wire antennas with their whole feed system."""

__version__ = "0.1.0"
