//! Hands a [`LinearProgram`] to an LP engine through good_lp and returns the variable values.
//!
//! The default engine is microlp (pure Rust, needs nothing but cargo). With the cargo feature
//! `highs`, HiGHS is available too.

use good_lp::{
    variable, Expression, ProblemVariables, ResolutionError, Solution, SolverModel, Variable,
};

use super::model::{LinearProgram, Sense};
use crate::error::{Error, Result};

/// The LP engines switchyard can use.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Engine {
    /// microlp: pure Rust, always available.
    Microlp,
    /// HiGHS, with the cargo feature `highs`.
    Highs,
}

impl Default for Engine {
    /// HiGHS when the build has it (it is much faster on large scenes), else microlp.
    fn default() -> Self {
        if cfg!(feature = "highs") {
            Engine::Highs
        } else {
            Engine::Microlp
        }
    }
}

impl Engine {
    /// Whether this build can use the engine.
    pub fn available(self) -> bool {
        match self {
            Engine::Microlp => true,
            Engine::Highs => cfg!(feature = "highs"),
        }
    }

    /// The engine's name.
    pub fn name(self) -> &'static str {
        match self {
            Engine::Microlp => "microlp",
            Engine::Highs => "highs",
        }
    }
}

/// Solves `program` (minimisation) and returns the value of every variable.
///
/// # Errors
/// The engine is not in this build, or it reports the problem infeasible, unbounded or failed.
pub fn solve(program: &LinearProgram, engine: Engine) -> Result<Vec<f64>> {
    if program.variables() == 0 {
        return Ok(Vec::new());
    }
    let mut problem = ProblemVariables::new();
    let vars: Vec<Variable> = program
        .upper
        .iter()
        .map(|&upper| problem.add(variable().min(0.0).max(upper)))
        .collect();
    let mut objective = Expression::with_capacity(vars.len());
    for (&var, &cost) in vars.iter().zip(&program.costs) {
        if cost != 0.0 {
            objective.add_mul(cost, var);
        }
    }
    let constraints = program.rows.iter().map(|row| {
        let mut expression = Expression::with_capacity(row.terms.len());
        for &(var, coefficient) in &row.terms {
            expression.add_mul(coefficient, vars[var]);
        }
        match row.sense {
            Sense::AtMost => expression.leq(row.rhs),
            Sense::Equal => expression.eq(row.rhs),
        }
    });
    let unsolved = problem.minimise(objective);
    let values = match engine {
        Engine::Microlp => {
            let mut model = unsolved.using(good_lp::microlp);
            for constraint in constraints {
                model.add_constraint(constraint);
            }
            let solution = model.solve().map_err(solver_error)?;
            vars.iter().map(|&v| solution.value(v)).collect()
        }
        Engine::Highs => solve_highs(unsolved, constraints, &vars)?,
    };
    Ok(values)
}

#[cfg(feature = "highs")]
fn solve_highs(
    unsolved: good_lp::variable::UnsolvedProblem,
    constraints: impl Iterator<Item = good_lp::Constraint>,
    vars: &[Variable],
) -> Result<Vec<f64>> {
    // Presolve does not reduce this LP and only costs time (measured; see DEVELOPERS.md).
    let mut model = unsolved
        .using(good_lp::highs)
        .set_option("presolve", "off")
        .set_option("threads", 1);
    for constraint in constraints {
        model.add_constraint(constraint);
    }
    let solution = model.solve().map_err(solver_error)?;
    Ok(vars.iter().map(|&v| solution.value(v)).collect())
}

#[cfg(not(feature = "highs"))]
fn solve_highs(
    _unsolved: good_lp::variable::UnsolvedProblem,
    _constraints: impl Iterator<Item = good_lp::Constraint>,
    _vars: &[Variable],
) -> Result<Vec<f64>> {
    Err(Error::Parameter(
        "this build has no HiGHS engine; rebuild with `--features highs`".into(),
    ))
}

fn solver_error(error: ResolutionError) -> Error {
    Error::Solver(format!("the LP engine failed: {error}"))
}
