using System.Net;
using System.Net.Sockets;
using System.Text;
using System.Text.Json;
using Google.Protobuf;
using Grpc.Core;
using PathService.Contracts.V1;
using PathService.Server.Tests.Fixtures;

namespace PathService.Server.Tests;

/// <summary>
/// The JSON side holds the same contract as gRPC: unknown fields are refused (400 naming the field), the request-size
/// limit applies (429 with RESOURCE_EXHAUSTED in the body, the HTTP mapping of that status everywhere), a 429 carries Retry-After, and a client that aborts its
/// upload is not logged as a server fault.
/// </summary>
[Collection(ServerCollection.Name)]
public sealed class JsonContractTests : IAsyncLifetime
{
    private const int MaxBytes = 1 << 20;
    private TestServer _server = null!;
    private HttpClient _http = null!;

    public async Task InitializeAsync()
    {
        _server = await TestServer.StartAsync(
        [
            $"Limits:MaxRequestBytes={MaxBytes}", "Limits:MaxConcurrentAnalyses=1", "Limits:MaxQueuedAnalyses=0", "Limits:RetryAfterSeconds=2.5",
        ]);
        _http = new HttpClient { BaseAddress = new Uri(_server.HttpUrl) };
    }

    public async Task DisposeAsync()
    {
        _http.Dispose();
        await _server.DisposeAsync();
    }

    private static string LinearJson(double loadFactor) =>
        JsonFormatter.Default.Format(new AnalyzeLinearRequest { Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad(), LoadFactor = loadFactor });

    private Task<HttpResponseMessage> PostAsync(string path, string json) =>
        _http.PostAsync(path, new StringContent(json, Encoding.UTF8, "application/json"));

    [Fact]
    public async Task A_misspelt_field_is_refused_with_400_naming_it()
    {
        string json = LinearJson(2.0).Replace("\"loadFactor\"", "\"loadFactr\"", StringComparison.Ordinal);
        Assert.Contains("loadFactr", json);
        using var response = await PostAsync("/v1/analyses:linear", json);
        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        using var body = JsonDocument.Parse(await response.Content.ReadAsStringAsync());
        Assert.Equal(3, body.RootElement.GetProperty("code").GetInt32()); // INVALID_ARGUMENT
        Assert.Contains("loadFactr", body.RootElement.GetProperty("message").GetString());
        var violation = body.RootElement.GetProperty("details")[0].GetProperty("fieldViolations")[0];
        Assert.Equal("loadFactr", violation.GetProperty("field").GetString());
    }

    [Fact]
    public async Task An_unknown_field_deep_in_the_model_is_named_by_its_path()
    {
        using var doc = JsonDocument.Parse(LinearJson(1.0));
        string json = LinearJson(1.0).Replace("\"id\":\"apex\"", "\"id\":\"apex\",\"xx\":1", StringComparison.Ordinal).Replace("\"id\": \"apex\"", "\"id\": \"apex\", \"xx\": 1", StringComparison.Ordinal);
        Assert.Contains("\"xx\"", json);
        using var response = await PostAsync("/v1/models:check", json);
        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        string text = await response.Content.ReadAsStringAsync();
        Assert.Contains("model.nodes[1].xx", text);
    }

    [Fact]
    public async Task Known_fields_in_both_spellings_are_accepted_and_mean_what_they_say()
    {
        using var camel = await PostAsync("/v1/analyses:linear", LinearJson(2.0));
        Assert.Equal(HttpStatusCode.OK, camel.StatusCode);
        using var body = JsonDocument.Parse(await camel.Content.ReadAsStringAsync());
        Assert.Equal(2.0, body.RootElement.GetProperty("loadFactor").GetDouble());
        // The proto field names are part of the JSON mapping too.
        string snake = LinearJson(2.0).Replace("\"loadFactor\"", "\"load_factor\"", StringComparison.Ordinal).Replace("\"loadCase\"", "\"load_case\"", StringComparison.Ordinal);
        using var proto = await PostAsync("/v1/analyses:linear", snake);
        Assert.Equal(HttpStatusCode.OK, proto.StatusCode);
    }

    [Fact]
    public async Task The_v1_vocabulary_is_on_the_wire_and_the_old_names_are_refused()
    {
        // Load sets and their factors, the bar's behavior: a combination naming an undefined load set is found at its
        // request path with the code UNKNOWN_LOAD_SET.
        var request = new CheckModelRequest { Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad() };
        request.Model.Bars[0].Behavior = BarBehavior.TensionAndCompression;
        request.LoadCase.LoadSets.Add(new LoadSet { Name = "snow", Loads = { new NodalLoad { Node = "apex", Fy = -1 } } });
        request.LoadCase.Combination = new LoadCombination { Name = "ULS", Reference = { new LoadSetFactor { LoadSet = "wind", Factor = 1.5 } } };
        string json = JsonFormatter.Default.Format(request);
        Assert.Contains("\"loadSets\"", json);
        Assert.Contains("\"loadSet\": \"wind\"", json);
        Assert.Contains("\"behavior\": \"BAR_BEHAVIOR_TENSION_AND_COMPRESSION\"", json);
        using var check = await PostAsync("/v1/models:check", json);
        Assert.Equal(HttpStatusCode.OK, check.StatusCode);
        var answer = JsonParser.Default.Parse<CheckModelResponse>(await check.Content.ReadAsStringAsync());
        var finding = Assert.Single(answer.Findings);
        Assert.Equal(("UNKNOWN_LOAD_SET", "load_case.combination.reference[0].load_set"), (finding.Code, finding.Field));

        // The old names are unknown fields now (a deliberate v1 rename, docs/api.md "Change log").
        using var old = await PostAsync("/v1/models:check", json.Replace("\"loadSets\"", "\"patterns\"", StringComparison.Ordinal));
        Assert.Equal(HttpStatusCode.BadRequest, old.StatusCode);
        Assert.Contains("loadCase.patterns", await old.Content.ReadAsStringAsync());

        // Reactions are reaction_x/y/z: the supports of the two-bar truss carry the apex load (sum of y reactions = 2·10 kN up).
        using var linear = await PostAsync("/v1/analyses:linear", LinearJson(2.0));
        var state = JsonParser.Default.Parse<AnalyzeLinearResponse>(await linear.Content.ReadAsStringAsync()).State;
        Assert.Equal(-2 * DemoStructures.ApexLoad().Reference.Sum(l => l.Fy), state.Nodes.Sum(n => n.ReactionY), 12);
        using var raw = JsonDocument.Parse(await (await PostAsync("/v1/analyses:linear", LinearJson(2.0))).Content.ReadAsStringAsync());
        Assert.Contains(raw.RootElement.GetProperty("state").GetProperty("nodes").EnumerateArray(), n => n.TryGetProperty("reactionY", out _));
    }

    [Fact]
    public async Task A_body_above_the_size_limit_gets_429_with_resource_exhausted_and_the_quota_subject()
    {
        var request = new CheckModelRequest { Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad() };
        request.Model.Name = new string('x', MaxBytes + 10);
        using var response = await PostAsync("/v1/models:check", JsonFormatter.Default.Format(request));
        Assert.Equal(HttpStatusCode.TooManyRequests, response.StatusCode);
        Assert.True(response.Headers.Contains("Retry-After"));
        using var body = JsonDocument.Parse(await response.Content.ReadAsStringAsync());
        Assert.Equal(8, body.RootElement.GetProperty("code").GetInt32()); // RESOURCE_EXHAUSTED, as over gRPC
        Assert.Contains(MaxBytes.ToString(System.Globalization.CultureInfo.InvariantCulture), body.RootElement.GetProperty("message").GetString());

        // Without a Content-Length (chunked upload) the limit holds as well.
        var chunked = new StringContent(JsonFormatter.Default.Format(request), Encoding.UTF8, "application/json");
        using var message = new HttpRequestMessage(HttpMethod.Post, "/v1/models:check") { Content = chunked };
        message.Headers.TransferEncodingChunked = true;
        using var second = await _http.SendAsync(message);
        Assert.Equal(HttpStatusCode.TooManyRequests, second.StatusCode);

        // Just under the limit is served.
        request.Model.Name = new string('x', MaxBytes - 4096);
        using var ok = await PostAsync("/v1/models:check", JsonFormatter.Default.Format(request));
        Assert.Equal(HttpStatusCode.OK, ok.StatusCode);
    }

    [Fact]
    public async Task A_busy_refusal_over_json_is_429_with_retry_after()
    {
        using var cts = new CancellationTokenSource();
        using var first = _server.Client.TracePath(Requests.LongTrace(), cancellationToken: cts.Token);
        try
        {
            Assert.True(await first.ResponseStream.MoveNext());
            using var response = await PostAsync("/v1/analyses:linear", LinearJson(1.0));
            Assert.Equal(HttpStatusCode.TooManyRequests, response.StatusCode);
            Assert.Equal(TimeSpan.FromSeconds(3), response.Headers.RetryAfter?.Delta); // 2.5 s rounded up
        }
        finally
        {
            cts.Cancel();
            Assert.True(await _server.WaitForIdleAsync(TimeSpan.FromSeconds(5)));
        }
    }

    [Fact]
    public async Task A_client_that_aborts_its_upload_is_not_logged_as_a_fault()
    {
        var original = Console.Out;
        var captured = new StringWriter();
        Console.SetOut(TextWriter.Synchronized(captured));
        try
        {
            var uri = new Uri(_server.HttpUrl);
            for (int i = 0; i < 5; i++)
            {
                using var tcp = new TcpClient();
                await tcp.ConnectAsync(uri.Host, uri.Port);
                var stream = tcp.GetStream();
                string head = $"POST /v1/analyses:linear HTTP/1.1\r\nHost: {uri.Host}\r\nContent-Type: application/json\r\nContent-Length: 100000\r\n\r\n";
                await stream.WriteAsync(Encoding.ASCII.GetBytes(head + "{\"model\": {\"nodes\": ["));
                await stream.FlushAsync();
                await Task.Delay(50);
                tcp.Client.LingerState = new LingerOption(true, 0); // reset, as a client that dies does
                tcp.Close();
            }
            await Task.Delay(500);
        }
        finally { Console.SetOut(original); }
        string logs = captured.ToString();
        Assert.DoesNotContain("\"@l\":\"Error\"", logs);
        Assert.DoesNotContain("responded 500", logs);
        // The server is still serving.
        using var ok = await PostAsync("/v1/analyses:linear", LinearJson(1.0));
        Assert.Equal(HttpStatusCode.OK, ok.StatusCode);
    }
}
