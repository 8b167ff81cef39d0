using System.Reflection;
using System.Security.Cryptography;
using Google.Protobuf;
using PathService.Application.Analyses;
using PathService.Application.Errors;
using PathService.Application.Validation;
using PathService.Contracts.V1;
using PathService.Engine.Continuation;
using PathService.Ifc.Mapping;

namespace PathService.Application;

/// <summary>
/// The one orchestration of every analysis, for the server and the CLI's in-process backend alike, so that the same
/// request gets the same answer and the same refusal in both. Each <c>Prepare…</c> takes the contract's request
/// message and does everything cheap that can refuse it — sizes and counts, the model (engine validator), the controls
/// (always; the defaults when none are given), the imperfection's fields, the cheap memory bound — and returns the
/// analysis ready to run: its <c>Run</c> takes a token and a time limit, runs the engine on the calling thread, maps
/// results to messages (a trace and a sweep are lazy sequences, yielded as the engine produces them), refuses any
/// non-finite number, and turns every input fault into an <see cref="AnalysisRefusedException"/>. Transport (slots,
/// deadlines, keys, telemetry, threads) stays with the callers.
/// </summary>
public sealed class AnalysisApplication(AnalysisLimits limits)
{
    private readonly RequestChecks _checks = new(limits);

    /// <summary>Informational version of the engine assembly, reported in every trace summary.</summary>
    public static readonly string EngineVersion =
        typeof(PathTracer).Assembly.GetCustomAttribute<AssemblyInformationalVersionAttribute>()?.InformationalVersion
        ?? typeof(PathTracer).Assembly.GetName().Version?.ToString() ?? "unknown";

    /// <summary>
    /// SHA-256 (lower-case hex) of the request as the protobuf runtime serialises it: fields in field-number order,
    /// unknown fields kept. Two requests with the same fingerprint are the same analysis and give the same path.
    /// </summary>
    public static string Fingerprint(IMessage request) => Convert.ToHexStringLower(SHA256.HashData(request.ToByteArray()));

    public AnalysisLimits Limits => limits;

    /// <summary>Refuses a model above the size limits (the first check of every analysis; a caller may run it earlier).</summary>
    public void CheckModelSize(StructureModel? model) => _checks.ModelSize(model);

    /// <summary>CheckModel: validation only (no analysis); every finding of the model, and of the controls when the model is valid.</summary>
    public CheckModelResponse Check(CheckModelRequest request)
    {
        _checks.ModelSize(request.Model);
        return ModelCheck.Run(request, limits);
    }

    public TraceAnalysis PrepareTrace(TracePathRequest request)
    {
        _checks.ModelSize(request.Model);
        _checks.PointBudget(request.Controls);
        var perfect = Inputs.Model(request.Model, request.LoadCase);
        var controls = Inputs.Controls(request.Controls, limits, perfect);
        if (request.Imperfection is { } imperfection)
            Refusals.Guard(() =>
            {
                ImperfectionShapes.Check(perfect.Definition, imperfection);
                return ImperfectionShapes.ToLength(perfect.Definition, imperfection, imperfection.Amplitude, "imperfection.amplitude");
            });
        return new TraceAnalysis(perfect, request.Imperfection, controls, _checks, Fingerprint(request));
    }

    public LinearAnalysis PrepareLinear(AnalyzeLinearRequest request)
    {
        _checks.ModelSize(request.Model);
        double lf = request.HasLoadFactor ? request.LoadFactor : 1.0;
        if (!double.IsFinite(lf)) throw Refusals.InvalidField("load_factor", "NON_FINITE_NUMBER", $"load_factor is {lf}; it must be finite");
        var model = Inputs.Model(request.Model, request.LoadCase);
        return new LinearAnalysis(model, lf, _checks, limits.MaxAnalysisTime);
    }

    public BucklingAnalysis PrepareBuckling(FindBucklingModesRequest request)
    {
        _checks.ModelSize(request.Model);
        int count = request.HasModeCount ? request.ModeCount : 3;
        if (count < 1 || count > limits.MaxBucklingModes)
            throw Refusals.InvalidField("mode_count", "MODE_COUNT_OUT_OF_RANGE", $"mode_count is {count}; it must be 1..{limits.MaxBucklingModes}");
        var model = Inputs.Model(request.Model, request.LoadCase);
        return new BucklingAnalysis(model, count, _checks, limits.MaxAnalysisTime);
    }

    public SweepAnalysis PrepareSweep(SweepImperfectionsRequest request)
    {
        _checks.ModelSize(request.Model);
        _checks.PointBudget(request.Controls);
        if (request.Amplitudes.Count == 0) throw Refusals.InvalidField("amplitudes", "AMPLITUDES_MISSING", "give at least one imperfection amplitude");
        if (request.Amplitudes.Count > limits.MaxAmplitudes)
            throw Refusals.TooLarge("amplitudes", "amplitudes", $"{request.Amplitudes.Count} amplitudes; at most {limits.MaxAmplitudes} per sweep");
        if (request.Imperfection is not { } imperfection)
            throw Refusals.InvalidField("imperfection", "IMPERFECTION_SHAPE_MISSING", "give the imperfection shape (buckling_modes or shape)");
        var model = Inputs.Model(request.Model, request.LoadCase);
        var controls = Inputs.Controls(request.Controls, limits, model);
        var definition = model.Definition;
        var amplitudes = Refusals.Guard(() =>
        {
            ImperfectionShapes.Check(definition, imperfection);
            return request.Amplitudes.Select((a, i) => ImperfectionShapes.ToLength(definition, imperfection, a, $"amplitudes[{i}]")).ToList();
        });
        return new SweepAnalysis(model, imperfection, controls, amplitudes, _checks, limits.MaxSweepTime);
    }

    public IfcImportAnalysis PrepareImport(ImportIfcModelRequest request)
    {
        if (request.IfcFile.IsEmpty) throw Refusals.InvalidField("ifc_file", "IFC_FILE_MISSING", "ifc_file is empty; send the IFC file's bytes");
        long maxBytes = limits.MaxIfcBytes > 0 ? limits.MaxIfcBytes : long.MaxValue;
        if (request.IfcFile.Length > maxBytes)
            throw Refusals.TooLarge("ifc_file", "ifc_file", $"the IFC file has {request.IfcFile.Length} bytes; this server reads at most {maxBytes}");
        var options = new IfcImportOptions
        {
            MaxBytes = maxBytes,
            AnalysisModel = NullIfEmpty(request.AnalysisModel),
            ReferenceLoadGroup = NullIfEmpty(request.ReferenceLoadGroup),
            ConstantLoadGroup = NullIfEmpty(request.ConstantLoadGroup),
            ForceUnit = NullIfEmpty(request.Units?.Force) ?? "kN",
            LengthUnit = NullIfEmpty(request.Units?.Length) ?? "m",
        };
        return new IfcImportAnalysis(request, options, _checks, limits.MaxAnalysisTime);
    }

    private static string? NullIfEmpty(string? s) => string.IsNullOrEmpty(s) ? null : s;
}
