using System.Net;
using System.Text;
using System.Text.Json;
using Grpc.Health.V1;
using PathService.Contracts.V1;
using PathService.Engine.Analyses;
using PathService.Server.Hosting;
using PathService.Contracts.Mapping;
using PathService.Server.Tests.Fixtures;
using StructuralModel = PathService.Engine.Model.StructuralModel;

namespace PathService.Server.Tests;

/// <summary>Health, JSON transcoding, metrics scrape and the unary analyses.</summary>
[Collection(ServerCollection.Name)]
public class PlatformTests(ServerFixture server)
{
    [Theory]
    [InlineData("")]
    [InlineData(ServerHost.HealthServiceName)]
    public async Task Health_check_reports_serving(string service)
    {
        var health = new Health.HealthClient(server.Channel);
        var reply = await health.CheckAsync(new HealthCheckRequest { Service = service });
        Assert.Equal(HealthCheckResponse.Types.ServingStatus.Serving, reply.Status);
    }

    [Fact]
    public async Task A_refused_linear_analysis_over_json_carries_its_field_violations()
    {
        var model = DemoStructures.TwoBarTruss();
        model.Bars[0].Area = -1;
        var json = Google.Protobuf.JsonFormatter.Default.Format(new AnalyzeLinearRequest { Model = model, LoadCase = DemoStructures.ApexLoad() });
        using var response = await server.Http.PostAsync("/v1/analyses:linear", new StringContent(json, Encoding.UTF8, "application/json"));
        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        string text = await response.Content.ReadAsStringAsync();
        using var body = JsonDocument.Parse(text);
        Assert.Equal(3, body.RootElement.GetProperty("code").GetInt32()); // INVALID_ARGUMENT
        Assert.Contains("model.bars[0].area", text);
    }

    [Fact]
    public async Task CheckModel_works_over_json_transcoding()
    {
        var model = DemoStructures.TwoBarTruss();
        model.Bars[0].Area = -1;
        var json = Google.Protobuf.JsonFormatter.Default.Format(new CheckModelRequest { Model = model, LoadCase = DemoStructures.ApexLoad() });
        using var response = await server.Http.PostAsync("/v1/models:check", new StringContent(json, Encoding.UTF8, "application/json"));
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.True(response.Headers.Contains("x-request-id"));
        using var body = JsonDocument.Parse(await response.Content.ReadAsStringAsync());
        Assert.False(body.RootElement.TryGetProperty("valid", out var valid) && valid.GetBoolean());
        var finding = Assert.Single(body.RootElement.GetProperty("findings").EnumerateArray());
        Assert.Equal("model.bars[0].area", finding.GetProperty("field").GetString());
        Assert.Equal("NON_POSITIVE_AREA", finding.GetProperty("code").GetString());
        Assert.Equal("bar-L", finding.GetProperty("itemId").GetString());
    }

    [Fact]
    public async Task CheckModel_accepts_a_valid_model_and_checks_controls()
    {
        var ok = await server.Client.CheckModelAsync(new CheckModelRequest { Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad() });
        Assert.True(ok.Valid);
        Assert.Equal("kN", ok.Units.Force);
        var controls = new SolverControls { Method = ContinuationMethod.DisplacementControl };
        var bad = await server.Client.CheckModelAsync(new CheckModelRequest { Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad(), Controls = controls });
        Assert.False(bad.Valid);
        Assert.Contains(bad.Findings, f => f.Field == "controls.control_dof");
    }

    [Fact]
    public async Task Prometheus_scrape_lists_the_service_metrics()
    {
        await server.Client.AnalyzeLinearAsync(new AnalyzeLinearRequest { Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad() });
        var text = await server.Http.GetStringAsync("/metrics");
        Assert.Contains("pathservice_analyses_started", text);
    }

    [Fact]
    public async Task AnalyzeLinear_matches_the_engine_and_echoes_ids()
    {
        var request = new AnalyzeLinearRequest { Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad(), LoadFactor = 2 };
        var reply = await server.Client.AnalyzeLinearAsync(request);
        var expected = LinearStaticAnalysis.Run(StructuralModel.Create(ModelMapper.ToDefinition(request.Model, request.LoadCase)), 2);
        Assert.Equal(2, reply.LoadFactor);
        Assert.Equal("apex", reply.State.Nodes[1].Node);
        Assert.Equal(expected.Displacements[4], reply.State.Nodes[1].Uy);
        Assert.Equal(expected.BarForces[1], reply.State.Bars[1].AxialForce);
        Assert.Equal("m", reply.Units.Length);
    }

    /// <summary>
    /// Square panel (side 4 m) with pinned base corners and two tension-only diagonals without prestress, H = 10 kN at
    /// the top of the windward post: the lengthening diagonal carries H√2 and the other is slack and reported as such
    /// (hand statics in the engine's OneSidedBracingTests and docs/theory.md §12).
    /// </summary>
    [Fact]
    public async Task AnalyzeLinear_reports_the_slack_diagonal_of_a_cable_braced_panel()
    {
        var m = new StructureModel { Name = "braced panel", Units = new UnitLabels { Force = "kN", Length = "m" } };
        m.Nodes.Add(new Node { Id = "base-w" });
        m.Nodes.Add(new Node { Id = "base-e", X = 4 });
        m.Nodes.Add(new Node { Id = "top-e", X = 4, Z = 4 });
        m.Nodes.Add(new Node { Id = "top-w", Z = 4 });
        void Bar(string id, string a, string b, BarBehavior behavior = BarBehavior.Unspecified) =>
            m.Bars.Add(new Bar { Id = id, StartNode = a, EndNode = b, ElasticModulus = DemoStructures.E, Area = DemoStructures.Area, Behavior = behavior });
        Bar("post-w", "base-w", "top-w");
        Bar("post-e", "base-e", "top-e");
        Bar("beam", "top-w", "top-e");
        Bar("diag-up", "base-w", "top-e", BarBehavior.TensionOnly);
        Bar("diag-down", "base-e", "top-w", BarBehavior.TensionOnly);
        foreach (var n in new[] { "base-w", "base-e" })
            foreach (var d in new[] { Direction.X, Direction.Y, Direction.Z })
                m.Supports.Add(new Support { Node = n, Direction = d });
        m.Supports.Add(new Support { Node = "top-w", Direction = Direction.Y });
        m.Supports.Add(new Support { Node = "top-e", Direction = Direction.Y });
        var reply = await server.Client.AnalyzeLinearAsync(new AnalyzeLinearRequest
        {
            Model = m, LoadCase = new LoadCase { Reference = { new NodalLoad { Node = "top-w", Fx = 10 } } },
        });
        Assert.Equal(["diag-down"], reply.SlackBars);
        Assert.Equal(10 * Math.Sqrt(2), reply.State.Bars[3].AxialForce, 3e-13); // engine: 2.4e-15 H
        Assert.Equal(0.0, reply.State.Bars[4].AxialForce);
    }

    [Fact]
    public async Task FindBucklingModes_returns_modes_with_node_ids()
    {
        var (model, loads, _) = DemoStructures.LatticeCap(3);
        var reply = await server.Client.FindBucklingModesAsync(new FindBucklingModesRequest { Model = model, LoadCase = loads, ModeCount = 2 });
        Assert.Equal(2, reply.Modes.Count);
        Assert.True(reply.Modes[0].LoadFactor <= reply.Modes[1].LoadFactor);
        Assert.Equal(model.Nodes.Count, reply.Modes[0].Shape.Count);
        Assert.Equal(model.Nodes[0].Id, reply.Modes[0].Shape[0].Node);
    }
}
