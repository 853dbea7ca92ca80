"""Reference optimum for placement problems, solved by scipy (HiGHS).

Usage: placement_scipy.py INSTANCES.json

INSTANCES.json is a list of Ambit `PlacementProblem`s (fields singers,
sections, fit [singer][section] with null = not allowed, sizes [{min, max}],
locks [[singer, section]], exclusions [[singer, section]], balance).

For each instance prints, in a JSON list:
  {"lsa": RESULT or null, "milp": RESULT}
where RESULT is {"feasible": bool, "fit_total": float, "net": float}:
  - "lsa": scipy.optimize.linear_sum_assignment on seat-expanded columns
    (one column per seat), only for fixed sizes (min == max in every section);
  - "milp": scipy.optimize.milp on the binary assignment model with
    min <= count <= max per section, and the convex balance penalty
    balance * (k - 1) for the k-th seat modelled with per-seat variables.
fit_total is the sum of the chosen fits, recomputed from the rounded
solution in float; net = fit_total - balance * sum c(c - 1)/2.
"""

import json
import sys

import numpy as np
from scipy.optimize import Bounds, LinearConstraint, linear_sum_assignment, milp
from scipy.sparse import lil_matrix


def allowed_matrix(instance):
    fit = instance["fit"]
    singers = len(fit)
    sections = len(instance["sections"])
    allowed = np.array([[fit[v][j] is not None for j in range(sections)] for v in range(singers)])
    for v, j in instance.get("exclusions", []):
        allowed[v, j] = False
    locks = {}
    for v, j in instance.get("locks", []):
        locks.setdefault(v, set()).add(j)
    for v, locked in locks.items():
        for j in range(sections):
            if j not in locked or len(locked) > 1:
                allowed[v, j] = False
    return allowed


def fit_value(instance, v, j):
    value = instance["fit"][v][j]
    return 0.0 if value is None else float(value)


def summarise(instance, section_of):
    sections = len(instance["sections"])
    fit_total = 0.0
    counts = [0] * sections
    for v, j in enumerate(section_of):
        fit_total += fit_value(instance, v, j)
        counts[j] += 1
    balance = instance.get("balance") or 0.0
    penalty = sum(balance * c * (c - 1) / 2 for c in counts)
    return {"feasible": True, "fit_total": fit_total, "net": fit_total - penalty}


INFEASIBLE = {"feasible": False, "fit_total": None, "net": None}


def solve_lsa(instance, allowed):
    sizes = instance["sizes"]
    singers = len(instance["fit"])
    seats = [j for j, size in enumerate(sizes) for _ in range(size["min"])]
    if len(seats) != singers:
        return INFEASIBLE
    cost = np.full((singers, len(seats)), np.inf)
    for v in range(singers):
        for column, j in enumerate(seats):
            if allowed[v, j]:
                cost[v, column] = -fit_value(instance, v, j)
    try:
        rows, columns = linear_sum_assignment(cost)
    except ValueError:  # "cost matrix is infeasible"
        return INFEASIBLE
    section_of = [0] * singers
    for row, column in zip(rows, columns):
        section_of[row] = seats[column]
    return summarise(instance, section_of)


def solve_milp(instance, allowed):
    singers = len(instance["fit"])
    sections = len(instance["sections"])
    sizes = instance["sizes"]
    balance = instance.get("balance") or 0.0
    pairs = singers * sections
    # Seat variables y[j][k] (k = 1..cap_j), continuous in [0, 1]: with
    # non-decreasing seat costs an optimum fills seats in order.
    seat_index = []
    for j in range(sections):
        for k in range(1, min(sizes[j]["max"], singers) + 1):
            seat_index.append((j, k))
    variables = pairs + len(seat_index)
    cost = np.zeros(variables)
    upper = np.zeros(variables)
    for v in range(singers):
        for j in range(sections):
            if allowed[v, j]:
                cost[v * sections + j] = -fit_value(instance, v, j)
                upper[v * sections + j] = 1.0
    for index, (j, k) in enumerate(seat_index):
        cost[pairs + index] = balance * (k - 1)
        upper[pairs + index] = 1.0
    rows = singers + 2 * sections
    matrix = lil_matrix((rows, variables))
    lower_bounds = np.zeros(rows)
    upper_bounds = np.zeros(rows)
    for v in range(singers):  # each singer in exactly one section
        for j in range(sections):
            matrix[v, v * sections + j] = 1.0
        lower_bounds[v] = upper_bounds[v] = 1.0
    for j in range(sections):  # min <= count <= max
        row = singers + j
        for v in range(singers):
            matrix[row, v * sections + j] = 1.0
        lower_bounds[row] = sizes[j]["min"]
        upper_bounds[row] = sizes[j]["max"]
    for index, (j, _) in enumerate(seat_index):  # count = seats used
        matrix[singers + sections + j, pairs + index] = -1.0
    for j in range(sections):
        row = singers + sections + j
        for v in range(singers):
            matrix[row, v * sections + j] = 1.0
    integrality = np.zeros(variables)
    integrality[:pairs] = 1
    result = milp(
        cost,
        constraints=LinearConstraint(matrix.tocsr(), lower_bounds, upper_bounds),
        integrality=integrality,
        bounds=Bounds(np.zeros(variables), upper),
        options={"mip_rel_gap": 0.0},
    )
    if result.status == 2:  # infeasible
        return INFEASIBLE
    if result.status != 0:
        raise RuntimeError(f"milp did not finish: {result.message}")
    x = np.round(result.x[:pairs]).reshape(singers, sections)
    section_of = [int(np.argmax(x[v])) for v in range(singers)]
    return summarise(instance, section_of)


def main():
    with open(sys.argv[1]) as handle:
        instances = json.load(handle)
    results = []
    for instance in instances:
        allowed = allowed_matrix(instance)
        fixed = all(size["min"] == size["max"] for size in instance["sizes"])
        results.append(
            {
                "lsa": solve_lsa(instance, allowed) if fixed else None,
                "milp": solve_milp(instance, allowed),
            }
        )
    json.dump(results, sys.stdout)


if __name__ == "__main__":
    main()
