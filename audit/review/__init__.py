"""The review stage, after the solver: verdicts against measurement uncertainty and rounding
(:mod:`audit.review.uncertainty`), probable causes of failing steps (:mod:`audit.review.causes`),
and reviewers' acceptances (:mod:`audit.review.acceptance`). It asks the solver for
re-evaluations through :mod:`audit.solve`'s public functions."""
