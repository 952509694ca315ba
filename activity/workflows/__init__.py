"""Workflows: the jobs users come for, built on the layers below.

The measurement chain with uncertainty, the model-choice spread, ion-selective electrode
calibration (:mod:`activity.workflows.ise`), pH-meter validation
(:mod:`activity.workflows.ph`), the demo, and what they share: HTML records
(:mod:`activity.workflows.record`) and plots (:mod:`activity.workflows.plotting`).
"""
