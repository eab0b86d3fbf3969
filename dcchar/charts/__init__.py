"""Charts of dcchar results: static views for print and a live chart for the widget kit.

This subpackage is the only part of dcchar that imports matplotlib; ``import dcchar`` does not
import it. Importing it changes neither the backend nor the rcParams: the look is set with
explicit artist properties and a local ``rc_context`` (:func:`chart_style`).
"""

from .curves import (VIEWS, current_torque_chart, draw_view, efficiency_power_chart, efficiency_torque_chart,
                     speed_current_chart, torque_speed_chart)
from .export import EXPORT_FORMATS, clipped_texts, export_figure, freeze_layout, overlapping_texts, save_figure
from .live import LiveChart
from .style import (COLUMN_MM, CONNECTION_STYLES, DOUBLE_COLUMN_MM, chart_style, figure_size_mm, new_figure,
                    short_name, style_for, style_key, title_block)

__all__ = [
    "VIEWS", "draw_view", "torque_speed_chart", "current_torque_chart", "speed_current_chart",
    "efficiency_torque_chart", "efficiency_power_chart", "LiveChart", "save_figure", "clipped_texts",
    "overlapping_texts", "freeze_layout",
    "EXPORT_FORMATS", "COLUMN_MM", "DOUBLE_COLUMN_MM", "CONNECTION_STYLES", "chart_style", "figure_size_mm",
    "new_figure", "style_for", "style_key", "title_block", "short_name",
]
