using System.Diagnostics;
using PathService.Engine.Model;

namespace PathService.Engine.Continuation;

/// <summary>What one trace shares across its branches: the system, the controls, the counters and the clock.</summary>
/// <param name="started">Stopwatch timestamp of the start of the trace (before the system was built), so that the wall
/// time and its limit include the ordering and symbolic analysis, and any time the caller kept the trace waiting.</param>
internal sealed class TraceSession(StructuralModel model, SolverControls controls, EquilibriumSystem sys, CancellationToken ct, long started)
{
    public StructuralModel Model { get; } = model;
    public SolverControls Controls { get; } = controls;
    public EquilibriumSystem Sys { get; } = sys;
    public Corrector Corrector { get; } = new(sys);
    public CancellationToken Ct { get; } = ct;
    private readonly long _started = started;

    /// <summary>Wall time since the trace started, including any time spent waiting for the caller to take the events.</summary>
    public TimeSpan Elapsed => Stopwatch.GetElapsedTime(_started);
    public int[] Monitored { get; } = controls.Monitored.Select(model.FullDof).ToArray();
    public int TargetDof { get; } = controls.TargetDisplacementDof is { } td ? model.FullDof(td) : controls.ControlDof is { } cd ? model.FullDof(cd) : -1;
    public int ControlEquation { get; } = controls.ControlDof is { } c ? model.Dofs.EquationOf[model.FullDof(c)] : -1;
    public double PsiSquared { get; } = controls.Constraint == ArcLengthConstraint.Spherical ? 1.0 : 0.0;
    public List<CriticalPoint> Criticals { get; } = [];
    public int Points { get; set; }
    public int Steps { get; set; }
    public int Iterations { get; set; }
    public int Cuts { get; set; }
    /// <summary>Turns of monitored displacements reported so far (numbers the DisplacementTurn events).</summary>
    public int Turns { get; set; }
    public int Branches { get; set; } = 1;
    public double MaxLoadFactor { get; set; }
    public double FinalLoadFactor { get; set; }
    /// <summary>Work of critical-point location (with the modes, full states and sensitivities at the points found).</summary>
    public TimeSpan CriticalPointTime { get; set; }
    public int CriticalPointFactorizations { get; set; }
    public long CriticalPointSolves { get; set; }
    public int CriticalPointTrials { get; set; }
    public int CriticalPointNewtonTrials { get; set; }
    public TimeSpan CriticalPointFactorizationTime { get; set; }

    public PathSummary Summary(StopReason reason, string message) => new(reason, message, MaxLoadFactor, FinalLoadFactor, Points,
        Steps, Iterations, Cuts, Sys.Factorizations, Sys.FactorizationTime, Elapsed, Criticals) {
            Branches = Branches, Refinements = Sys.Refined.RefinementSteps, CriticalPointTime = CriticalPointTime,
            CriticalPointFactorizations = CriticalPointFactorizations, CriticalPointSolves = CriticalPointSolves,
            CriticalPointTrials = CriticalPointTrials, CriticalPointNewtonTrials = CriticalPointNewtonTrials,
            CriticalPointFactorizationTime = CriticalPointFactorizationTime,
        };

    /// <summary>A stop that ends the whole trace, whichever branch is being followed (null: go on).</summary>
    public (StopReason Reason, string Message)? GlobalStop()
    {
        if (Points >= Controls.MaxPoints) return (StopReason.PointLimitReached, $"reached the requested {Controls.MaxPoints} points");
        if (Ct.IsCancellationRequested) return (StopReason.Cancelled, "cancelled by the caller");
        if (Controls.WallTimeLimit is { } wl && Elapsed > wl) return (StopReason.WallTimeExceeded, $"wall-time limit of {wl.TotalSeconds:G3} s exceeded");
        return null;
    }

    public bool TargetDisplacementMet(double[] u)
    {
        if (Controls.TargetDisplacement is not { } target || TargetDof < 0) return false;
        double v = u[TargetDof];
        return target > 0 ? v >= target * (1 - 1e-12) : v <= target * (1 - 1e-12);
    }

    public bool StopRuleMet(double[] u, double lambda) =>
        (Controls.TargetLoadFactor is { } t && lambda >= t) || TargetDisplacementMet(u);
}

/// <summary>The moving state of one branch of the path: the last converged point and the step that led to it.</summary>
internal sealed class BranchState(int id, double[] u, double lambda, int inertia, double increment, int freeCount)
{
    public int Id { get; } = id;
    public double[] U { get; } = u;
    public double Lambda { get; set; } = lambda;
    public int Inertia { get; set; } = inertia;
    public double Increment { get; set; } = increment;
    public double[] Predictor { get; } = new double[freeCount];
    public double[] LastStep { get; } = new double[freeCount];
    public double LastLoadStep { get; set; }
    public bool HasPreviousStep { get; set; }
    public double ArcLength { get; set; }
    public int LastPointIndex { get; set; }
    public int PointsOnBranch { get; set; }
}
