using Google.Protobuf;
using PathService.Application.Errors;
using PathService.Cli.Backends;
using PathService.Contracts.V1;
using Xunit.Abstractions;

namespace PathService.Cli.Tests;

/// <summary>
/// The CLI's in-process backend and a real server (Kestrel on loopback, default limits) run the same application layer,
/// so one request gets the same answer and the same refusal in both modes: the same messages (timings aside), and for a
/// refusal the same kind (hence exit code), message, and findings (reason code and field path). The refusals include
/// requests the in-process mode used to let through: non-finite values, bad controls given explicitly, counts above
/// the limits, a sweep without its shape.
/// </summary>
public sealed class BackendEquivalenceTests(ITestOutputHelper output) : IAsyncLifetime
{
    private ServerInstance _server = null!;
    private GrpcBackend _remote = null!;
    private readonly InProcessBackend _local = new();

    public async Task InitializeAsync()
    {
        _server = await ServerInstance.StartAsync(slots: 2);
        _remote = new GrpcBackend(_server.GrpcUrl, retries: 0);
    }

    public async Task DisposeAsync()
    {
        await _remote.DisposeAsync();
        await _local.DisposeAsync();
        await _server.DisposeAsync();
    }

    private static readonly JsonFormatter Json = new(JsonFormatter.Settings.Default.WithFormatDefaultValues(true));

    /// <summary>
    /// A message as JSON after a trip through its wire form (as the server's answer makes it: a singular -0 is not sent,
    /// so it reads as 0), with the summary's timings (wall and factorisation time) cleared.
    /// </summary>
    private static string Comparable(IMessage m)
    {
        var copy = m.Descriptor.Parser.ParseFrom(m.ToByteArray());
        if (copy is TracePathResponse { Summary: { } s })
        {
            s.WallTime = null;
            s.FactorizationTime = null;
        }
        return Json.Format(copy);
    }

    private static async Task<List<string>> CollectAsync<T>(IAsyncEnumerable<T> stream) where T : IMessage
    {
        var list = new List<string>();
        await foreach (var m in stream) list.Add(Comparable(m));
        return list;
    }

    [Fact]
    public async Task A_trace_streams_the_same_messages_in_process_and_from_the_server()
    {
        foreach (var (name, request) in new[]
        {
            ("two-bar truss", Models.TwoBarTruss()),
            // No controls at all: the defaults (100 points, arc-length) in both modes.
            ("two-bar truss without controls", WithoutControls(Models.TwoBarTruss())),
            ("two-bar truss with a shape imperfection", WithShapeImperfection(Models.TwoBarTruss())),
        })
        {
            var local = await CollectAsync(_local.TraceAsync(request, CancellationToken.None));
            var remote = await CollectAsync(_remote.TraceAsync(request, CancellationToken.None));
            output.WriteLine($"{name}: {local.Count} messages");
            Assert.True(local.Count > 3, name);
            Assert.Equal(local, remote);
            // The summary carries the request's fingerprint and the engine version in both modes.
            Assert.Contains(PathService.Application.AnalysisApplication.Fingerprint(request), local[^1]);
        }
    }

    [Fact]
    public async Task Linear_buckling_check_and_sweep_answers_are_the_same_in_process_and_from_the_server()
    {
        var truss = Models.TwoBarTruss();
        var linear = new AnalyzeLinearRequest { Model = truss.Model, LoadCase = truss.LoadCase, LoadFactor = 2 };
        Assert.Equal(Comparable(await _local.LinearAsync(linear, default)), Comparable(await _remote.LinearAsync(linear, default)));

        var cap = Models.LatticeCap(cells: 4, points: 20);
        var buckling = new FindBucklingModesRequest { Model = cap.Model, LoadCase = cap.LoadCase, ModeCount = 2 };
        Assert.Equal(Comparable(await _local.BucklingAsync(buckling, default)), Comparable(await _remote.BucklingAsync(buckling, default)));

        var check = new CheckModelRequest { Model = truss.Model, LoadCase = truss.LoadCase };
        Assert.Equal(Comparable(await _local.CheckAsync(check, default)), Comparable(await _remote.CheckAsync(check, default)));

        var sweep = Sweep(cap, -0.01, -0.02);
        var local = await CollectAsync(_local.SweepAsync(sweep, default));
        Assert.Equal(3, local.Count); // the perfect reference and two amplitudes
        Assert.Equal(local, await CollectAsync(_remote.SweepAsync(sweep, default)));
    }

    /// <summary>Requests refused in both modes, with the refusal expected: kind, then (reason, field) of each finding.</summary>
    public static TheoryData<string> RefusedRequests => new()
    {
        "linear load factor NaN", "linear result overflows", "buckling mode count 0", "buckling mode count 21",
        "trace residual tolerance NaN", "trace max points above the limit", "trace node coordinate infinite",
        "trace bar area negative and modulus zero", "trace mechanism", "trace imperfection mode 0",
        "sweep without controls or shape", "sweep of 51 amplitudes", "sweep amplitude NaN", "sweep without amplitudes",
        "check of a model above the node limit", "IFC import of an empty file",
    };

    [Theory]
    [MemberData(nameof(RefusedRequests))]
    public async Task A_refused_request_gets_the_same_refusal_in_process_and_from_the_server(string name)
    {
        var (call, kind, expected) = Refused(name);
        var local = await Assert.ThrowsAsync<AnalysisRejectedException>(() => call(_local));
        var remote = await Assert.ThrowsAsync<AnalysisRejectedException>(() => call(_remote));
        output.WriteLine($"{name}: {local.Kind} {local.Message}");
        foreach (var f in local.Findings) output.WriteLine($"  {f.Code} {f.Field} '{f.ItemId}': {f.Message}");
        Assert.Equal(kind, local.Kind);
        Assert.Equal(kind, remote.Kind);
        Assert.Equal(expected, local.Findings.Select(f => (f.Code, f.Field)).ToList());
        Assert.Equal(expected, remote.Findings.Select(f => (f.Code, f.Field)).ToList());
        Assert.Equal(local.Findings.Select(f => f.Message), remote.Findings.Select(f => f.Message));
        Assert.Equal(local.Message, remote.Message);
    }

    private static (Func<IAnalysisBackend, Task> Call, RefusalKind Kind, List<(string, string)> Findings) Refused(string name)
    {
        var truss = Models.TwoBarTruss();
        var cap = Models.LatticeCap(cells: 4, points: 20);
        static Func<IAnalysisBackend, Task> Trace(TracePathRequest r) => async b => { await foreach (var _ in b.TraceAsync(r, default)) { } };
        static Func<IAnalysisBackend, Task> SweepOf(SweepImperfectionsRequest r) => async b => { await foreach (var _ in b.SweepAsync(r, default)) { } };
        switch (name)
        {
            case "linear load factor NaN":
                return (b => b.LinearAsync(new AnalyzeLinearRequest { Model = truss.Model, LoadCase = truss.LoadCase, LoadFactor = double.NaN }, default),
                    RefusalKind.Invalid, [("NON_FINITE_NUMBER", "load_factor")]);
            case "linear result overflows":
            {
                // Valid magnitudes (each within ±1e15) whose displacements overflow: EA = 1e-300 kN under 1e15 kN.
                var m = truss.Model.Clone();
                foreach (var bar in m.Bars) { bar.ElasticModulus = 1e-200; bar.Area = 1e-100; }
                var loads = new LoadCase { Reference = { new NodalLoad { Node = "apex", Fy = -1e15 } } };
                return (b => b.LinearAsync(new AnalyzeLinearRequest { Model = m, LoadCase = loads }, default),
                    RefusalKind.Unsuitable, [("NON_FINITE_RESULT", "state.nodes[0].reaction_x")]);
            }
            case "buckling mode count 0":
                return (b => b.BucklingAsync(new FindBucklingModesRequest { Model = cap.Model, LoadCase = cap.LoadCase, ModeCount = 0 }, default),
                    RefusalKind.Invalid, [("MODE_COUNT_OUT_OF_RANGE", "mode_count")]);
            case "buckling mode count 21":
                return (b => b.BucklingAsync(new FindBucklingModesRequest { Model = cap.Model, LoadCase = cap.LoadCase, ModeCount = 21 }, default),
                    RefusalKind.Invalid, [("MODE_COUNT_OUT_OF_RANGE", "mode_count")]);
            case "trace residual tolerance NaN":
                truss.Controls.ResidualTolerance = double.NaN;
                return (Trace(truss), RefusalKind.Invalid, [("CONTROL_OUT_OF_RANGE", "controls.residual_tolerance")]);
            case "trace max points above the limit":
                truss.Controls.MaxPoints = 5001;
                return (Trace(truss), RefusalKind.OverLimit, [("", "controls.max_points")]);
            case "trace node coordinate infinite":
                truss.Model.Nodes[1].X = double.PositiveInfinity;
                return (Trace(truss), RefusalKind.Invalid, [("NON_FINITE_NUMBER", "model.nodes[1].x")]);
            case "trace bar area negative and modulus zero":
                truss.Model.Bars[0].Area = -1;
                truss.Model.Bars[1].ElasticModulus = 0;
                return (Trace(truss), RefusalKind.Invalid, [("NON_POSITIVE_AREA", "model.bars[0].area"), ("NON_POSITIVE_STIFFNESS", "model.bars[1].elastic_modulus")]);
            case "trace mechanism":
                truss.Model.Supports.RemoveAt(truss.Model.Supports.Count - 1); // the apex's z support
                return (Trace(truss), RefusalKind.Unsuitable, [("MECHANISM", "model")]);
            case "trace imperfection mode 0":
                truss.Imperfection = new Imperfection { BucklingModes = { 0 }, Amplitude = 0.01 };
                return (Trace(truss), RefusalKind.Invalid, [("IMPERFECTION_MODE_OUT_OF_RANGE", "imperfection.buckling_modes[0]")]);
            case "sweep without controls or shape":
            {
                var r = Sweep(cap, -0.01);
                r.Controls = null;
                r.Imperfection = null;
                return (SweepOf(r), RefusalKind.Invalid, [("IMPERFECTION_SHAPE_MISSING", "imperfection")]);
            }
            case "sweep of 51 amplitudes":
                return (SweepOf(Sweep(cap, Enumerable.Repeat(-0.01, 51).ToArray())), RefusalKind.OverLimit, [("", "amplitudes")]);
            case "sweep amplitude NaN":
                return (SweepOf(Sweep(cap, -0.01, double.NaN)), RefusalKind.Invalid, [("NON_FINITE_NUMBER", "amplitudes[1]")]);
            case "sweep without amplitudes":
                return (SweepOf(Sweep(cap)), RefusalKind.Invalid, [("AMPLITUDES_MISSING", "amplitudes")]);
            case "check of a model above the node limit":
            {
                var m = new StructureModel();
                for (int i = 0; i <= PathService.Application.AnalysisLimits.Default.MaxNodes; i++) m.Nodes.Add(new Node { Id = $"n{i}", X = i });
                return (b => b.CheckAsync(new CheckModelRequest { Model = m }, default), RefusalKind.OverLimit, [("", "model.nodes")]);
            }
            case "IFC import of an empty file":
                return (b => b.ImportIfcAsync(new ImportIfcModelRequest(), default), RefusalKind.Invalid, [("IFC_FILE_MISSING", "ifc_file")]);
            default:
                throw new ArgumentException(name);
        }
    }

    private static TracePathRequest WithoutControls(TracePathRequest r)
    {
        r.Controls = null;
        return r;
    }

    private static TracePathRequest WithShapeImperfection(TracePathRequest r)
    {
        r.Imperfection = new Imperfection { Amplitude = 0.02, Shape = { new ShapeVector { Node = "apex", Y = -1 } } };
        return r;
    }

    private static SweepImperfectionsRequest Sweep(TracePathRequest cap, params double[] amplitudes)
    {
        var controls = cap.Controls.Clone();
        controls.StopAtFirstCriticalPoint = true;
        controls.FullStateEvery = 0;
        var r = new SweepImperfectionsRequest
        {
            Model = cap.Model, LoadCase = cap.LoadCase, Controls = controls,
            Imperfection = new Imperfection { BucklingModes = { 1 }, AmplitudeUnit = AmplitudeUnit.SpanFraction },
        };
        r.Amplitudes.AddRange(amplitudes);
        return r;
    }
}
