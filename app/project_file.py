"""Re-export: the project file lives in the core now (:mod:`network_models.project`), where the CLI's
``netstretch project`` and ``--project`` read it too."""

from network_models.project import (  # noqa: F401
    FORMAT,
    MANIFEST,
    MAX_UNPACKED_BYTES,
    VERSION,
    Project,
    ProjectCompound,
    ProjectFileError,
    ProjectInput,
    manifest_text,
    read_project,
    write_project,
)
