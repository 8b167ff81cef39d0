using System.Net;
using System.Text;
using System.Text.Json;
using Google.Protobuf;
using Google.Rpc;
using Grpc.Core;
using PathService.Contracts.V1;
using PathService.Server.Tests.Fixtures;
using StatusCode = Grpc.Core.StatusCode;

namespace PathService.Server.Tests;

/// <summary>
/// ImportIfcModel on a real server: the structure read from an IFC file, traced by TracePath, reaches the same first
/// critical load factor as the same structure sent as messages; unreadable files and files above the byte limit are
/// refused with the field and the reason; the JSON route takes the file as base64.
/// </summary>
[Collection(ServerCollection.Name)]
public sealed class IfcImportTests : IAsyncLifetime
{
    private const int MaxBytes = 1 << 20;
    private TestServer _server = null!;

    public async Task InitializeAsync() => _server = await TestServer.StartAsync([$"Limits:MaxRequestBytes={MaxBytes}"]);

    public async Task DisposeAsync() => await _server.DisposeAsync();

    private static byte[] FileBytes(string name) => File.ReadAllBytes(Path.Combine(AppContext.BaseDirectory, "Files", name));

    /// <summary>The roof the stored file trussed-roof.ifc was written from (the IFC tests' own builder, linked in).</summary>
    private static (StructureModel Model, LoadCase Loads) TrussedRoof() => PathService.Ifc.Tests.TestStructures.TrussedRoof();

    private async Task<CriticalPoint> FirstCriticalAsync(StructureModel model, LoadCase loads)
    {
        var request = new TracePathRequest
        {
            Model = model, LoadCase = loads,
            Controls = new SolverControls
            {
                Method = ContinuationMethod.ArcLength, InitialLoadIncrement = 5, MaxPoints = 400, StopAtFirstCriticalPoint = true,
                CriticalPointTolerance = 1e-10, ResidualTolerance = 1e-10,
            },
        };
        var streamed = await Requests.ReadAllAsync(_server.Client.TracePath(request));
        return streamed.First(r => r.UpdateCase == TracePathResponse.UpdateOneofCase.CriticalPoint).CriticalPoint;
    }

    private static BadRequest.Types.FieldViolation Violation(RpcException ex) =>
        Assert.Single(ex.GetRpcStatus()!.GetDetail<BadRequest>()!.FieldViolations);

    [Fact]
    public async Task The_roof_file_imports_to_its_nodes_bars_and_loads_and_traces_to_the_same_critical_load_factor()
    {
        var response = await _server.Client.ImportIfcModelAsync(new ImportIfcModelRequest
        {
            IfcFile = ByteString.CopyFrom(FileBytes("trussed-roof.ifc")), ReferenceLoadGroup = "reference",
        });
        Assert.Equal("IFC4", response.Schema);
        Assert.Empty(response.Findings);
        Assert.Equal((8, 9, 16, 2), (response.Model.Nodes.Count, response.Model.Bars.Count, response.Model.Supports.Count, response.Model.GroundSprings.Count));
        Assert.Equal(2, response.LoadCase.Reference.Count);
        Assert.Empty(response.LoadCase.Constant);
        Assert.Equal(("kN", "m"), (response.Model.Units.Force, response.Model.Units.Length));
        Assert.False(string.IsNullOrWhiteSpace(response.UnitsNote));

        var (m, l) = TrussedRoof();
        var direct = await FirstCriticalAsync(m, l);
        var viaIfc = await FirstCriticalAsync(response.Model, response.LoadCase);
        Assert.Equal(direct.Kind, viaIfc.Kind);
        // The file stores the values in decimal text (shortest round-trip form); λ_cr is located to 1e-10.
        double relative = Math.Abs(direct.LoadFactor - viaIfc.LoadFactor) / direct.LoadFactor;
        Assert.True(relative < 1e-9, $"λ_cr {direct.LoadFactor} direct, {viaIfc.LoadFactor} via IFC (relative {relative:E2})");
    }

    [Fact]
    public async Task Unit_labels_asked_for_scale_the_model()
    {
        var response = await _server.Client.ImportIfcModelAsync(new ImportIfcModelRequest
        {
            IfcFile = ByteString.CopyFrom(FileBytes("trussed-roof.ifc")), ReferenceLoadGroup = "reference",
            Units = new UnitLabels { Force = "N", Length = "mm" },
        });
        var r1 = response.Model.Nodes.Single(n => n.Id == "R1");
        Assert.Equal(-1500, r1.X, 1e-9);
        Assert.Equal(500, r1.Z, 1e-9);
        Assert.Equal(-10_000, response.LoadCase.Reference.Single(p => p.Node == "R1").Fz, 1e-6);
        // E = 2.1e8 kN/m² = 2.1e5 N/mm².
        Assert.Equal(2.1e5, response.Model.Bars[0].ElasticModulus, 1e-6);
    }

    [Fact]
    public async Task A_truncated_file_is_invalid_and_the_violation_names_the_entity()
    {
        string text = Encoding.UTF8.GetString(FileBytes("trussed-roof.ifc"));
        int cut = text.IndexOf("#40=", StringComparison.Ordinal) + 12;
        var ex = await Assert.ThrowsAsync<RpcException>(() => _server.Client.ImportIfcModelAsync(new ImportIfcModelRequest
        {
            IfcFile = ByteString.CopyFromUtf8(text[..cut]),
        }).ResponseAsync);
        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        var v = Violation(ex);
        Assert.Equal(("ifc_file", "TRUNCATED"), (v.Field, v.Reason));
        Assert.Contains("#40", v.Description);
    }

    [Fact]
    public async Task An_empty_file_is_invalid()
    {
        var ex = await Assert.ThrowsAsync<RpcException>(() => _server.Client.ImportIfcModelAsync(new ImportIfcModelRequest()).ResponseAsync);
        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        Assert.Equal(("ifc_file", "IFC_FILE_MISSING"), (Violation(ex).Field, Violation(ex).Reason));
    }

    [Theory]
    [InlineData("units.force", "lbf", "", "")]
    [InlineData("units.length", "", "ft", "")]
    [InlineData("reference_load_group", "", "", "no such group")]
    [InlineData("analysis_model", "", "", "", "no such model")]
    public async Task A_bad_option_is_invalid_on_its_own_field(string field, string force, string length, string reference, string analysisModel = "")
    {
        var ex = await Assert.ThrowsAsync<RpcException>(() => _server.Client.ImportIfcModelAsync(new ImportIfcModelRequest
        {
            IfcFile = ByteString.CopyFrom(FileBytes("trussed-roof.ifc")), ReferenceLoadGroup = reference, AnalysisModel = analysisModel,
            Units = new UnitLabels { Force = force, Length = length },
        }).ResponseAsync);
        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        var v = Violation(ex);
        Assert.Equal((field, "IFC_OPTION_INVALID"), (v.Field, v.Reason));
    }

    [Fact]
    public async Task A_constant_group_that_is_the_reference_group_is_invalid_on_constant_load_group()
    {
        var ex = await Assert.ThrowsAsync<RpcException>(() => _server.Client.ImportIfcModelAsync(new ImportIfcModelRequest
        {
            IfcFile = ByteString.CopyFrom(FileBytes("trussed-roof.ifc")), ReferenceLoadGroup = "reference", ConstantLoadGroup = "reference",
        }).ResponseAsync);
        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        Assert.Equal("constant_load_group", Violation(ex).Field);
    }

    [Fact]
    public async Task A_file_above_the_request_byte_limit_is_refused_as_resource_exhausted()
    {
        await using var small = await TestServer.StartAsync(["Limits:MaxRequestBytes=4096"]);
        var bytes = FileBytes("trussed-roof.ifc");
        Assert.True(bytes.Length > 4096);
        var ex = await Assert.ThrowsAsync<RpcException>(() => small.Client.ImportIfcModelAsync(new ImportIfcModelRequest
        {
            IfcFile = ByteString.CopyFrom(bytes), ReferenceLoadGroup = "reference",
        }).ResponseAsync);
        Assert.Equal(StatusCode.ResourceExhausted, ex.StatusCode);
    }

    [Fact]
    public async Task The_JSON_route_takes_the_file_as_base64_and_answers_with_the_model()
    {
        using var http = new HttpClient { BaseAddress = new Uri(_server.HttpUrl) };
        string json = JsonSerializer.Serialize(new Dictionary<string, string>
        {
            ["ifcFile"] = Convert.ToBase64String(FileBytes("trussed-roof.ifc")), ["referenceLoadGroup"] = "reference",
        });
        using var response = await http.PostAsync("/v1/models:importIfc", new StringContent(json, Encoding.UTF8, "application/json"));
        string body = await response.Content.ReadAsStringAsync();
        Assert.True(response.StatusCode == HttpStatusCode.OK, body);
        var parsed = JsonParser.Default.Parse<ImportIfcModelResponse>(body);
        Assert.Equal((8, 9), (parsed.Model.Nodes.Count, parsed.Model.Bars.Count));
        Assert.Equal("IFC4", parsed.Schema);
    }

    /// <summary>
    /// Damaged files (seeded: cut at a random byte, bytes flipped, a span deleted or doubled) are answered with OK or a
    /// specific status naming ifc_file or an option, never INTERNAL or UNKNOWN; the answer's numbers are finite.
    /// </summary>
    [Fact]
    public async Task Damaged_files_get_a_specific_status_never_an_internal_error()
    {
        const int Seed = 17_0401;
        var r = new Random(Seed);
        var original = FileBytes("trussed-roof.ifc");
        var codes = new Dictionary<StatusCode, int>();
        for (int i = 0; i < 300; i++)
        {
            var bytes = original.ToList();
            switch (r.Next(4))
            {
                case 0: bytes = bytes.Take(r.Next(bytes.Count)).ToList(); break;
                case 1: for (int k = 0, n = 1 + r.Next(8); k < n; k++) bytes[r.Next(bytes.Count)] = (byte)r.Next(256); break;
                case 2: { int at = r.Next(bytes.Count); bytes.RemoveRange(at, Math.Min(bytes.Count - at, 1 + r.Next(200))); break; }
                default: { int at = r.Next(bytes.Count); bytes.InsertRange(at, bytes.Skip(at).Take(1 + r.Next(200)).ToList()); break; }
            }
            StatusCode code;
            try
            {
                var response = await _server.Client.ImportIfcModelAsync(new ImportIfcModelRequest { IfcFile = ByteString.CopyFrom(bytes.ToArray()) });
                Assert.Null(RequestFuzzer.FindNonFinite(response));
                code = StatusCode.OK;
            }
            catch (RpcException ex)
            {
                code = ex.StatusCode;
                Assert.True(code is StatusCode.InvalidArgument or StatusCode.ResourceExhausted,
                    $"seed {Seed} case {i}: {ex.StatusCode} '{ex.Status.Detail}'");
                Assert.False(string.IsNullOrWhiteSpace(ex.Status.Detail), $"seed {Seed} case {i}: no message");
                Assert.Contains(Violation(ex).Field, new[] { "ifc_file", "analysis_model", "reference_load_group", "model.nodes", "model.bars", "model.springs", "model.supports" });
            }
            codes[code] = codes.GetValueOrDefault(code) + 1;
        }
        // Both outcomes occur: some damage leaves a readable file (e.g. a flipped byte inside a name).
        Assert.True(codes.GetValueOrDefault(StatusCode.InvalidArgument) > 0, string.Join(", ", codes));
    }
}
