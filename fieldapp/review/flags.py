"""What the supervisor's job list shows at a glance, from the circuits' diagnoses."""

from __future__ import annotations


def job_flags(diagnoses: list, problems: list) -> dict:
    """Flags for one job from its circuits' ``ringmath.diagnose`` results (None: not assessed).

    faults: findings of severity "fault" other than Zs (codes, each once, in order found);
    zs_over: some point or the circuit is over its Zs limit;
    missing: readings still due, plus circuits that could not be assessed (no circuits at all
    counts as one missing step).
    """
    faults: list[str] = []
    zs_over = False
    missing = 0 if diagnoses else 1
    for diagnosis, _problem in zip(diagnoses, problems, strict=True):
        if diagnosis is None:
            missing += 1
            continue
        for finding in diagnosis.get("findings") or []:
            if finding.get("code") == "zs_over_limit":
                zs_over = True
            elif finding.get("severity") == "fault" and finding.get("code") not in faults:
                faults.append(finding.get("code"))
        circuit = diagnosis.get("circuit") or {}
        zs, zs_max = circuit.get("zs_ohm"), circuit.get("zs_max_ohm")
        if zs is not None and zs_max is not None and zs > zs_max:
            zs_over = True
        if any(p.get("ok") is False for p in diagnosis.get("points") or []):
            zs_over = True
        missing += sum(1 for r in diagnosis.get("readings") or [] if r.get("status") == "pending")
    return {"faults": faults, "zs_over": zs_over, "missing": missing,
            "all_clear": not faults and not zs_over and not missing}
