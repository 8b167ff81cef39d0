using AnnotationsExtensions = Google.Api.AnnotationsExtensions;
using HttpRule = Google.Api.HttpRule;
using Google.Protobuf;
using Google.Protobuf.Reflection;
using ServiceDescriptor = Google.Protobuf.Reflection.ServiceDescriptor;
using PathService.Contracts.V1;

namespace PathService.Server.Hosting;

/// <summary>
/// Every RPC of the public contract, read from the generated file descriptors rather than listed by hand, so that the
/// request guard, the JSON checks, the authentication policy and the tests cover an RPC added to a .proto file
/// without anyone remembering to register it.
/// </summary>
public static class ContractCatalog
{
    /// <summary>The contract's files (only service.proto declares services today; the others are listed so that a service moved there stays covered).</summary>
    public static readonly IReadOnlyList<FileDescriptor> Files =
        [ServiceReflection.Descriptor, ModelReflection.Descriptor, LoadingReflection.Descriptor, ControlReflection.Descriptor, ResultsReflection.Descriptor];

    /// <summary>Every service of the contract.</summary>
    public static readonly IReadOnlyList<ServiceDescriptor> Services = Files.SelectMany(f => f.Services).ToList();

    /// <summary>Every method of every service.</summary>
    public static readonly IReadOnlyList<MethodDescriptor> Methods = Services.SelectMany(s => s.Methods).ToList();

    /// <summary>gRPC path of a method: <c>/package.Service/Method</c>.</summary>
    public static string PathOf(MethodDescriptor m) => $"/{m.Service.FullName}/{m.Name}";

    /// <summary>Methods that take exactly one request message (unary and server streaming), by gRPC path, with their request parser.</summary>
    public static readonly IReadOnlyDictionary<string, MethodDescriptor> SingleRequestMethods =
        Methods.Where(m => !m.IsClientStreaming).ToDictionary(PathOf, StringComparer.Ordinal);

    /// <summary>The HTTP/JSON routes of the contract (google.api.http, POST with body "*"), by path.</summary>
    public static readonly IReadOnlyDictionary<string, MethodDescriptor> JsonPostRoutes = Methods
        .Select(m => (Method: m, Rule: m.GetOptions()?.GetExtension(AnnotationsExtensions.Http)))
        .Where(x => x.Rule is { PatternCase: HttpRule.PatternOneofCase.Post, Body: "*" })
        .ToDictionary(x => x.Rule!.Post, x => x.Method, StringComparer.Ordinal);

    /// <summary>The parser of a method's request message.</summary>
    public static MessageParser ParserOf(MethodDescriptor m) => m.InputType.Parser;
}
