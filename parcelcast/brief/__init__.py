"""The morning briefing: one configuration, one command, a page a forecaster reads in two minutes.

* :mod:`parcelcast.brief.config`: the TOML configuration, checked key by key;
* :mod:`parcelcast.brief.assemble`: the numbers, from one opened analysis;
* :mod:`parcelcast.brief.sentences`: the summary in plain sentences;
* :mod:`parcelcast.brief.write`: figures, HTML and Markdown pages (one template), JSON.
"""

from parcelcast.brief.assemble import assemble_brief
from parcelcast.brief.config import BriefConfig, BriefConfigError, read_config
from parcelcast.brief.write import write_brief

__all__ = ["BriefConfig", "BriefConfigError", "assemble_brief", "read_config", "write_brief"]
