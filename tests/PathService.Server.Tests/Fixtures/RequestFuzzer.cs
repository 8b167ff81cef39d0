using Google.Protobuf;
using Google.Protobuf.Reflection;
using Google.Protobuf.WellKnownTypes;
using PathService.Contracts.V1;

namespace PathService.Server.Tests.Fixtures;

/// <summary>
/// Seeded generator of bad (and sometimes good) requests. It starts from small valid requests and applies a few
/// random mutations through protobuf reflection, so every field of every message is reached without a list of them:
/// doubles become NaN, ±∞, ±1e308, zero, negative or subnormal; integers extreme; enums out of range; strings
/// another item's id (duplicates, dangling and crossed references), empty or very long; repeated fields lose, gain or
/// multiply entries (up to tens of thousands of copies); sub-messages vanish or appear empty. A few structural
/// mutations (coincident nodes, all nodes removed, an empty model) are applied directly.
/// </summary>
public sealed class RequestFuzzer(int seed)
{
    private static readonly double[] SpecialDoubles =
    [
        double.NaN, double.PositiveInfinity, double.NegativeInfinity, 1e308, -1e308, 0.0, -0.0, -1, 1e-308,
        double.Epsilon, 1e-300, 1e300, 1e12, -1e12, 1e-9, 0.5, 2,
    ];

    private static readonly int[] SpecialInts = [0, -1, 1, 2, int.MaxValue, int.MinValue, 1_000_000, -1_000_000, 7];

    public Random Random { get; } = new(seed);

    public IMessage Next(string rpc)
    {
        var r = Random;
        var (model, loads, controls) = Base(r);
        IMessage request = rpc switch
        {
            "TracePath" => new TracePathRequest { Model = model, LoadCase = loads, Controls = controls },
            "CheckModel" => new CheckModelRequest { Model = model, LoadCase = loads, Controls = r.Next(2) == 0 ? controls : null },
            "AnalyzeLinear" => new AnalyzeLinearRequest { Model = model, LoadCase = loads, LoadFactor = r.Next(3) == 0 ? SpecialDoubles[r.Next(SpecialDoubles.Length)] : 1.0 },
            "FindBucklingModes" => new FindBucklingModesRequest { Model = model, LoadCase = loads, ModeCount = r.Next(4) == 0 ? SpecialInts[r.Next(SpecialInts.Length)] : r.Next(1, 4) },
            "SweepImperfections" => new SweepImperfectionsRequest
            {
                Model = model, LoadCase = loads, Controls = controls,
                Imperfection = new Imperfection { BucklingModes = { 1 }, AmplitudeUnit = AmplitudeUnit.SpanFraction },
                Amplitudes = { 1e-3, 1e-2 },
            },
            _ => throw new ArgumentException(rpc),
        };
        int mutations = r.Next(10) == 0 ? 0 : 1 + r.Next(3);
        for (int i = 0; i < mutations; i++) Mutate(request, r);
        return request;
    }

    /// <summary>
    /// A request of the method's input type: the hand-made starting points above for the RPCs they know, an empty
    /// message of the input type for any other (an RPC added to the contract later), then the same mutations.
    /// </summary>
    public IMessage Next(MethodDescriptor method)
    {
        if (method.Name is "TracePath" or "CheckModel" or "AnalyzeLinear" or "FindBucklingModes" or "SweepImperfections") return Next(method.Name);
        var request = method.InputType.Parser.ParseFrom(ByteString.Empty);
        for (int i = 0, n = 1 + Random.Next(3); i < n && method.InputType.Fields.InFieldNumberOrder().Count > 0; i++) Mutate(request, Random);
        return request;
    }

    private static (StructureModel, LoadCase, SolverControls) Base(Random r)
    {
        var controls = new SolverControls { MaxPoints = 1 + r.Next(12), InitialLoadIncrement = 0.2 };
        switch (r.Next(5))
        {
            case 0:
            case 1:
                var c = DemoStructures.ThroughBothLimitPoints();
                c.MaxPoints = 1 + r.Next(12);
                return (DemoStructures.TwoBarTruss(), DemoStructures.ApexLoad(), c);
            case 2:
            case 3:
                var (m, l, crown) = DemoStructures.LatticeCap(2 + r.Next(2));
                controls.Monitored.Add(crown);
                return (m, l, controls);
            default:
                return (new StructureModel(), new LoadCase(), controls);
        }
    }

    private static void Mutate(IMessage root, Random r)
    {
        // Structural mutations that reflection alone would rarely hit.
        if (r.Next(12) == 0 && FindModel(root) is { } model)
        {
            switch (r.Next(4))
            {
                case 0 when model.Nodes.Count >= 2: // coincident nodes
                    var (a, b) = (model.Nodes[r.Next(model.Nodes.Count)], model.Nodes[r.Next(model.Nodes.Count)]);
                    b.X = a.X; b.Y = a.Y; b.Z = a.Z;
                    return;
                case 1:
                    model.Nodes.Clear();
                    return;
                case 2:
                    model.Bars.Clear();
                    return;
                default: // huge declared size: many copies of one entry
                    if (model.Bars.Count > 0)
                    {
                        var bar = model.Bars[0];
                        int copies = r.Next(20) == 0 ? 70_000 : r.Next(50, 3000);
                        for (int i = 0; i < copies; i++) model.Bars.Add(bar.Clone());
                    }
                    return;
            }
        }

        var slots = new List<(IMessage Message, FieldDescriptor Field)>();
        Collect(root, slots, 0);
        var (msg, field) = slots[r.Next(slots.Count)];
        var acc = field.Accessor;
        if (field.IsRepeated)
        {
            var list = (System.Collections.IList)acc.GetValue(msg);
            switch (r.Next(5))
            {
                case 0: list.Clear(); break;
                case 1 when list.Count > 0: list.RemoveAt(r.Next(list.Count)); break;
                case 2 when list.Count > 0: list.Add(Copy(list[r.Next(list.Count)]!)); break; // duplicate (same id)
                case 3 when list.Count > 0:
                    var item = list[r.Next(list.Count)]!;
                    int n = r.Next(10) == 0 ? 25_000 : r.Next(2, 200);
                    for (int i = 0; i < n; i++) list.Add(Copy(item));
                    break;
                default:
                    if (field.FieldType == FieldType.Message) list.Add(field.MessageType.Parser.ParseFrom(ByteString.Empty));
                    break;
            }
            return;
        }

        switch (field.FieldType)
        {
            case FieldType.Double:
                acc.SetValue(msg, r.Next(4) == 0 ? (r.NextDouble() - 0.5) * Math.Pow(10, r.Next(-20, 20)) : SpecialDoubles[r.Next(SpecialDoubles.Length)]);
                break;
            case FieldType.Int32:
                acc.SetValue(msg, r.Next(3) == 0 ? r.Next(-100, 100) : SpecialInts[r.Next(SpecialInts.Length)]);
                break;
            case FieldType.Int64:
                acc.SetValue(msg, r.Next(2) == 0 ? long.MinValue : (long)r.Next(-1000, 1000) * 1_000_000_000L);
                break;
            case FieldType.Bool:
                acc.SetValue(msg, r.Next(2) == 0);
                break;
            case FieldType.Enum:
                int number = r.Next(3) == 0 ? SpecialInts[r.Next(SpecialInts.Length)] : r.Next(-2, 8);
                acc.SetValue(msg, System.Enum.ToObject(field.EnumType.ClrType, number));
                break;
            case FieldType.String:
                acc.SetValue(msg, RandomString(root, r));
                break;
            case FieldType.Message:
                if (r.Next(2) == 0) acc.Clear(msg);
                else acc.SetValue(msg, field.MessageType.Parser.ParseFrom(ByteString.Empty));
                break;
            default:
                if (field.HasPresence) acc.Clear(msg);
                break;
        }
    }

    private static object Copy(object item) => item is IMessage m ? m.Descriptor.Parser.ParseFrom(m.ToByteString()) : item;

    /// <summary>Every field of every message in the tree (set or not), to pick one uniformly.</summary>
    private static void Collect(IMessage m, List<(IMessage, FieldDescriptor)> slots, int depth)
    {
        foreach (var f in m.Descriptor.Fields.InFieldNumberOrder())
        {
            slots.Add((m, f));
            if (depth > 6 || f.FieldType != FieldType.Message) continue;
            if (f.IsRepeated)
            {
                var list = (System.Collections.IList)f.Accessor.GetValue(m);
                // Large lists: a sample of their items keeps a mutation cheap.
                for (int i = 0; i < list.Count; i += Math.Max(1, list.Count / 16))
                    if (list[i] is IMessage child) Collect(child, slots, depth + 1);
            }
            else if (f.Accessor.GetValue(m) is IMessage child) Collect(child, slots, depth + 1);
        }
    }

    private static string RandomString(IMessage root, Random r)
    {
        switch (r.Next(6))
        {
            case 0: return "";
            case 1: return "nowhere";
            case 2: return new string('n', 5000);
            case 3: return "\0\u202e\ud83d\ude00 ü";
            default:
                var ids = new List<string>();
                if (FindModel(root) is { } model)
                {
                    ids.AddRange(model.Nodes.Take(20).Select(n => n.Id));
                    ids.AddRange(model.Bars.Take(20).Select(b => b.Id));
                }
                return ids.Count > 0 ? ids[r.Next(ids.Count)] : "n";
        }
    }

    private static StructureModel? FindModel(IMessage root) => root switch
    {
        TracePathRequest t => t.Model,
        CheckModelRequest c => c.Model,
        AnalyzeLinearRequest a => a.Model,
        FindBucklingModesRequest b => b.Model,
        SweepImperfectionsRequest s => s.Model,
        _ => null,
    };

    /// <summary>Path of the first non-finite double in a message tree (NaN or ±∞), or null.</summary>
    public static string? FindNonFinite(IMessage m, string path = "")
    {
        foreach (var f in m.Descriptor.Fields.InFieldNumberOrder())
        {
            var value = f.Accessor.GetValue(m);
            string p = path.Length == 0 ? f.Name : $"{path}.{f.Name}";
            if (f.IsRepeated)
            {
                int i = 0;
                foreach (var item in (System.Collections.IEnumerable)value)
                {
                    if (item is double d && !double.IsFinite(d)) return $"{p}[{i}] = {d}";
                    if (item is IMessage child && FindNonFinite(child, $"{p}[{i}]") is { } hit) return hit;
                    i++;
                }
            }
            else if (value is double d && !double.IsFinite(d)) return $"{p} = {d}";
            else if (value is IMessage child && child is not Duration && FindNonFinite(child, p) is { } hit) return hit;
        }
        return null;
    }
}
