//! What the trajectory LP's assignment says beyond the score: who switched from which track to
//! which and when ([`switches`]), and how each true object was covered over time ([`audit`]).
//! Both read the weights of the same solution ([`Assignment`](crate::trajectory_metric::Assignment)).

pub mod audit;
pub mod switches;
