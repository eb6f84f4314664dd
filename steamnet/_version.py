"""Program and model-file format versions."""

__version__ = "0.1.0"
#: Version of the model-file format this program reads (``format_version`` key).
FORMAT_VERSION = 1
