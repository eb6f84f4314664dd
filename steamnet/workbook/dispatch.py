"""The cheapest-dispatch sheets of the workbook (``steamnet optimise --workbook``):
the optimum of each case beside the control philosophy's, the moves per element with
the binding limits and shadow prices, and for an hourly profile the saving per month
as a bar chart (docs/workbook.md)."""

from __future__ import annotations

from openpyxl.chart import BarChart, Reference

from .sheet import write_table
from .tables import frame_table
from .writer import table_name, write_workbook

__all__ = ["write_optimise_workbook", "DISPATCH_SHEET", "MONTH_SHEET"]

DISPATCH_SHEET = "Cheapest dispatch"
MOVES_SHEET = "Dispatch moves"
LIMITS_SHEET = "Dispatch limits"
SHADOW_SHEET = "Shadow prices"
MONTH_SHEET = "Saving per month"


def _frame_sheet(df, name, slug, title, note):
    def write(wb, run, used):
        write_table(wb, frame_table(df, name=name, slug=slug, title=title, note=note,
                                    currency=run.currency), run.status_of,
                    table_name=table_name(slug, used))
    return write


def _month_sheet(result):
    mo = result.monthly

    def write(wb, run, used):
        cur = run.currency
        df = mo.rename(columns={"hours": "hours_h", "control_cost": "control_cost",
                                "optimal_cost": "optimal_cost", "saving": "saving"})
        tb = frame_table(df, name=MONTH_SHEET, slug="saving_per_month",
                         title="Saving per month", currency=cur,
                         note=f"Per month of the hourly profile: the hours with an "
                         f"optimum, the cost of running them by the control philosophy "
                         f"and at the cheapest dispatch, and the saving [{cur}].")
        ws, n = write_table(wb, tb, run.status_of,
                            table_name=table_name("saving_per_month", used))
        if n:
            ch = BarChart()
            ch.type = "col"
            ch.title = f"Saving per month [{cur}]"
            ch.y_axis.title = cur
            ch.x_axis.title = "month"
            col = list(df.columns).index("saving") + 1
            head = 3                     # the sheet's heading row (title, note, heading)
            ch.add_data(Reference(ws, min_col=col, min_row=head, max_row=head + n),
                        titles_from_data=True)
            ch.set_categories(Reference(ws, min_col=1, min_row=head + 1,
                                        max_row=head + n))
            ch.legend = None
            ch.height, ch.width = 8, 16
            ws.add_chart(ch, f"A{head + n + 3}")
    return write


def write_optimise_workbook(path, result):
    """The workbook of the optimal balances of ``result`` (an
    :class:`~steamnet.studies.optimise.OptimiseResult`): every usual sheet, for the
    optimal balances, and the cheapest-dispatch sheets before the findings."""
    cur = result.model.site.currency
    sheets = [
        (DISPATCH_SHEET, "Each case's cheapest dispatch beside its control philosophy: "
         "costs, saving, largest moves and binding limits.",
         _frame_sheet(result.table, DISPATCH_SHEET, "cheapest_dispatch",
                      "Cheapest dispatch", f"Per case: the operating cost by the control "
                      f"philosophy and at the cheapest dispatch within every limit, the "
                      f"saving [{cur}/h], the programme's cost and optimality gap, the "
                      f"rounds, the largest moves and the limits that bind. Every other "
                      f"sheet of this workbook shows the optimal balances.")),
        (MOVES_SHEET, "Each moved element's flow by the control philosophy and at the "
         "optimum.",
         _frame_sheet(result.dispatch, MOVES_SHEET, "dispatch_moves", "Dispatch moves",
                      "Per case and element the optimiser may move: its flow by the "
                      "control philosophy and at the optimum [t/h].")),
        (LIMITS_SHEET, "The limits that bind at the optimum, with what one more unit "
         "of each would save.",
         _frame_sheet(result.binding, LIMITS_SHEET, "dispatch_limits",
                      "Dispatch limits", f"The limits that hold each optimum back: the "
                      f"item, the limit and its value, and what one more unit of it "
                      f"would save [{cur}/h per unit].")),
        (SHADOW_SHEET, "The shadow price of steam on each header at the optimum.",
         _frame_sheet(result.shadow, SHADOW_SHEET, "shadow_prices", "Shadow prices",
                      f"The cost of one more t/h used on each header at the optimum, no "
                      f"condensate back, from the programme's duals [{cur}/t].")),
    ]
    if result.kind == "profile":
        sheets.append((MONTH_SHEET, "The saving of the hourly profile per month, as a "
                       "table and a chart.", _month_sheet(result)))
    ev = result.evaluation
    return write_workbook(path, result.study, checks=ev.stations.checks,
                          envelopes=getattr(ev.stations, "envelopes", None),
                          gains=getattr(ev.stations, "gains", None), extra_sheets=sheets)
