"""arcflash: arc-flash hazard studies by IEEE 1584-2018 and NFPA 70E.

Results are for qualified persons; local codes and licensed engineering
practice govern. See ``arcflash.output.cautions``.
"""

from .site.loader import load_site
from .study.faults import bolted_faults
from .study.mitigation import mitigate
from .study.pipeline import run_study
from .study.uncertainty import uncertainty

__version__ = "0.1.0"
__all__ = ["bolted_faults", "load_site", "mitigate", "run_study", "uncertainty"]
