"""The interactive design page (``ductgen design``): a local web page that edits a spec and
shows the plan view, the centreline section, the key numbers, the airflow estimate and the
warnings as the user types, builds through the same pipeline as ``ductgen build``, saves the
spec as TOML and runs small sweeps.

Standard-library HTTP server (:mod:`ductgen.page.server`), a JSON API, and a page of our own
(``assets/``) whose form is generated from the published JSON Schema.
"""

from ductgen.page.preview import preview
from ductgen.page.server import DesignApp, make_server

__all__ = ["DesignApp", "make_server", "preview"]
