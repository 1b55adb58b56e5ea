"""The review stage, after the solver: it reads a solved balance again and judges its findings.

How the parts fit (each imports only those listed before it):

* :mod:`~audit.review.runner`: re-evaluates a step with some inputs changed, only through the
  solver's public functions (:func:`audit.solve.evaluate_stream`, :func:`audit.solve.evaluate_step`);
* :mod:`~audit.review.margins`: the margin of each law finding as a function of a re-evaluated step;
* :mod:`~audit.review.inputs`: which written values of a step are uncertain inputs (stream
  properties and flows, the step's declared claims) and their standard uncertainties;
* :mod:`~audit.review.propagation`: linear (GUM) and Monte Carlo propagation, plain functions;
* :mod:`~audit.review.verdicts`: violated, marginal or consistent, and how a finding says so;
* :mod:`~audit.review.uncertainty`: the uncertainty and verdicts of one step's law findings;
* :mod:`~audit.review.slips`: the usual slips of a balance file, each as a change that undoes it;
* :mod:`~audit.review.causes`: probable causes, the slips that would make a failing step close;
* :mod:`~audit.review.passes`: :func:`~audit.review.passes.review`, the pass over a solved balance;
* :mod:`~audit.review.acceptance`: reviewers' acceptances, applied to the audit's result.
"""
