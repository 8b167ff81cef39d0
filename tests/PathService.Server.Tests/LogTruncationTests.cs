using Google.Rpc;
using Grpc.Core;
using PathService.Server.Tests.Fixtures;
using StatusCode = Grpc.Core.StatusCode;

namespace PathService.Server.Tests;

/// <summary>Caller-supplied strings reach logs and refusal details only cut to 64 characters and an ellipsis.</summary>
[Collection(ServerCollection.Name)]
public sealed class LogTruncationTests
{
    [Fact]
    public async Task A_1400_character_id_is_cut_in_the_refusal_and_in_the_log()
    {
        string id = "q" + new string('x', 1398) + "z";
        var original = Console.Out;
        var captured = new StringWriter();
        Console.SetOut(TextWriter.Synchronized(captured));
        RpcException ex;
        try
        {
            await using var server = await TestServer.StartAsync(["--Serilog:MinimumLevel:Default=Information"]);
            var request = Requests.Truss();
            request.Model.Bars[1].EndNode = id;
            request.Model.Name = id;
            ex = await Assert.ThrowsAsync<RpcException>(() => Requests.ReadAllAsync(server.Client.TracePath(request)));
            await Task.Delay(200);
        }
        finally { Console.SetOut(original); }

        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        string cut = id[..64] + "…";
        Assert.Contains(cut, ex.Status.Detail);
        Assert.DoesNotContain(id[..65], ex.Status.Detail);
        var violation = ex.GetRpcStatus()!.GetDetail<BadRequest>()!.FieldViolations.Single(v => v.Field == "model.bars[1].end_node");
        Assert.Contains(cut, violation.Description);
        Assert.DoesNotContain(id[..65], violation.Description);

        string logs = captured.ToString();
        Assert.Contains("refused with {StatusCode}", logs); // the capture saw the refusal line
        Assert.DoesNotContain(id[..65], logs);
    }
}
