// The error budget for people and programs: the table printed on the terminal, budget.csv (one row per line,
// then the quadrature sum and the radii), budget_runs.csv (one row per line and run) and budget.png.
#pragma once

#include <string>

#include "sim/budget/budget.hpp"

namespace wayward {

std::string budget_table(const BudgetResult& b);    // for the terminal
// A source's share of the quadrature sum: its median squared over the sum of the squares (NaN for the all-off and
// all-on lines, sources left out of --combine, and sources not in the scenario).
double budget_share(const BudgetResult& b, const BudgetLine& l);
std::string budget_csv(const BudgetResult& b);      // one row per line, then the quadrature sum and the radii
std::string budget_runs_csv(const BudgetResult& b); // one row per line and run
void budget_plot(const BudgetResult& b, const std::string& png_path);

}  // namespace wayward
