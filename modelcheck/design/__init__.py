"""design stage: size a member for a force, rate existing members, suggest replacements.

One stress relation serves three jobs: checking (the rules engine), choosing a size for a force
(:mod:`modelcheck.design.sizing`), and stating what a member can carry
(:mod:`modelcheck.design.rating`). Every answer comes from the rule set itself: candidate sizes
are written as a synthetic member table and run through :func:`modelcheck.rules.engine.run_checks`,
so a size passes exactly when the check command would pass it.
"""
