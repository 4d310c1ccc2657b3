"""Where the bundled demo (an invented greenhouse controller) lives.

The files sit in the repository's ``inventories/`` folder, which is installed as the
package ``selector.inventories`` so that a plain (non-editable) install finds them too.
"""

from __future__ import annotations

from importlib import resources
from pathlib import Path

DEMO_WORKBOOK = "greenhouse_inventory.xlsx"
DEMO_CSV_DIR = "greenhouse_csv"
DEMO_DESIGN = "greenhouse.toml"
TEMPLATE = "template.xlsx"


def demo_dir() -> Path:
    """Folder holding the demo inventory, design and template."""
    try:
        root = resources.files("selector.inventories")
        path = Path(str(root))
        if (path / DEMO_DESIGN).exists():
            return path
    except (ModuleNotFoundError, TypeError):
        pass
    # Running from a source checkout without installing.
    return Path(__file__).resolve().parent.parent / "inventories"


def demo_workbook() -> Path:
    """The demo inventory as one workbook."""
    return demo_dir() / DEMO_WORKBOOK


def demo_design() -> Path:
    """The demo design (TOML)."""
    return demo_dir() / DEMO_DESIGN


def demo_csv_files() -> list[Path]:
    """The demo inventory as one CSV file per table."""
    return sorted((demo_dir() / DEMO_CSV_DIR).glob("*.csv"))


def template_workbook() -> Path:
    """The blank inventory template."""
    return demo_dir() / TEMPLATE
