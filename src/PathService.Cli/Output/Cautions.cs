namespace PathService.Cli.Output;

/// <summary>The usual cautions printed with every report.</summary>
internal static class Cautions
{
    public const string Short =
        "Results are an aid to a qualified engineer's judgement: check them against the governing codes and licensed practice, and verify the units of every input.";
}
