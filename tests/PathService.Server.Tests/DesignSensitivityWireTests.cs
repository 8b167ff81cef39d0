using Google.Rpc;
using Grpc.Core;
using PathService.Contracts.V1;
using PathService.Server.Tests.Fixtures;

namespace PathService.Server.Tests;

/// <summary>
/// Design sensitivities over the wire: by id, per bar, node and spring, with the directional derivative, against the
/// two-bar truss's closed form (docs/theory.md §6.1 and §13): λ_L ∝ A, so dλ/dA of each bar is λ_L/(2A).
/// </summary>
[Collection(ServerCollection.Name)]
public class DesignSensitivityWireTests(ServerFixture server)
{
    [Fact]
    public async Task Each_located_limit_point_carries_its_sensitivities_by_id_and_the_directional_derivative()
    {
        var request = Requests.Truss();
        request.Controls.DesignSensitivities = true;
        request.Controls.DesignDirection = new DesignDirection { Bars = { new BarDesignChange { Bar = "bar-L", Area = DemoStructures.Area } } };
        var all = await Requests.ReadAllAsync(server.Client.TracePath(request));
        var limits = all.Where(r => r.UpdateCase == TracePathResponse.UpdateOneofCase.CriticalPoint).Select(r => r.CriticalPoint).ToList();
        Assert.Equal(2, limits.Count);
        foreach (var cp in limits)
        {
            var s = cp.Sensitivity;
            Assert.NotNull(s);
            Assert.True(s.Defined, s.Note);
            Assert.Equal(SensitivityMethod.LimitPoint, s.Method);
            Assert.Equal(["bar-L", "bar-R"], s.Bars.Select(b => b.Bar));
            Assert.Equal(["left", "apex", "right"], s.Nodes.Select(n => n.Node));
            foreach (var b in s.Bars)
                Assert.True(Math.Abs(b.Area - cp.LoadFactor / (2 * DemoStructures.Area)) <= 1e-12 * Math.Abs(b.Area), $"{b.Bar}: {b.Area}");
            // Doubling one bar's area, to first order, raises λ by half of λ.
            Assert.True(Math.Abs(s.Directional - 0.5 * cp.LoadFactor) <= 1e-12 * Math.Abs(cp.LoadFactor), $"directional {s.Directional}");
        }
    }

    [Fact]
    public async Task Without_the_option_no_sensitivity_is_sent_and_a_bad_direction_is_refused_naming_its_field()
    {
        var plain = await Requests.ReadAllAsync(server.Client.TracePath(Requests.Truss()));
        Assert.All(plain.Where(r => r.UpdateCase == TracePathResponse.UpdateOneofCase.CriticalPoint), r => Assert.Null(r.CriticalPoint.Sensitivity));

        var request = Requests.Truss();
        request.Controls.DesignSensitivities = true;
        request.Controls.DesignDirection = new DesignDirection { Nodes = { new NodeDesignChange { Node = "nowhere", Y = 1 } } };
        var ex = await Assert.ThrowsAsync<RpcException>(() => Requests.ReadAllAsync(server.Client.TracePath(request)));
        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        var violation = Assert.Single(ex.GetRpcStatus()!.GetDetail<BadRequest>()!.FieldViolations);
        Assert.Equal("controls.design_direction.nodes[0].node", violation.Field);
        Assert.Contains("'nowhere'", violation.Description);
    }
}
