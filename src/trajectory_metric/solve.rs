//! Hands a [`LinearProgram`] to an LP engine through good_lp and returns the variable values.
//!
//! The simplex engines: microlp (pure Rust, needs nothing but cargo) and, with the cargo feature
//! `highs`, HiGHS. The default engine is the Lagrangian one ([`super::lagrangian`]), which hands
//! the components it does not certify to [`Engine::simplex`].

use good_lp::{
    variable, Expression, ProblemVariables, ResolutionError, Solution, SolverModel, Variable,
};

use super::model::{LinearProgram, Sense};
use crate::error::{Error, Result};

/// The LP engines switchyard can use.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Engine {
    /// One shortest path per truth under Lagrangian prices, certified by bounds; components it
    /// does not certify go to the simplex engine of the build ([`Engine::simplex`]).
    Lagrangian,
    /// microlp: pure Rust, always available.
    Microlp,
    /// HiGHS, with the cargo feature `highs`.
    Highs,
}

impl Default for Engine {
    /// The Lagrangian engine, in every build.
    fn default() -> Self {
        Engine::Lagrangian
    }
}

impl Engine {
    /// Whether this build can use the engine.
    pub fn available(self) -> bool {
        match self {
            Engine::Lagrangian | Engine::Microlp => true,
            Engine::Highs => cfg!(feature = "highs"),
        }
    }

    /// The engine's name.
    pub fn name(self) -> &'static str {
        match self {
            Engine::Lagrangian => "lagrangian",
            Engine::Microlp => "microlp",
            Engine::Highs => "highs",
        }
    }
}

impl Engine {
    /// The simplex engine this engine uses for LPs: itself, or for the Lagrangian engine HiGHS
    /// when the build has it (much faster on large LPs), else microlp.
    pub fn simplex(self) -> Engine {
        match self {
            Engine::Lagrangian if cfg!(feature = "highs") => Engine::Highs,
            Engine::Lagrangian => Engine::Microlp,
            other => other,
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
    let values = match engine.simplex() {
        Engine::Lagrangian | Engine::Microlp => {
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
        "this build has no HiGHS engine; build one with `cargo build --release --features highs` \
         (needs cmake, a C++ compiler and libclang)"
            .into(),
    ))
}

fn solver_error(error: ResolutionError) -> Error {
    Error::Solver(format!("the LP engine failed: {error}"))
}
