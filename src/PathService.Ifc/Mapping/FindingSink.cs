using PathService.Contracts.V1;

namespace PathService.Ifc.Mapping;

/// <summary>Collects the mapper's findings in the contract's Finding shape; the field names the IFC instance ("ifc #12").</summary>
internal sealed class FindingSink
{
    private readonly List<Finding> _items = [];
    public IReadOnlyList<Finding> Items => _items;

    public void Warning(string code, string field, string item, string message) => Add(FindingSeverity.Warning, code, field, item, message);
    public void Error(string code, string field, string item, string message) => Add(FindingSeverity.Error, code, field, item, message);

    private void Add(FindingSeverity severity, string code, string field, string item, string message) =>
        _items.Add(new Finding { Severity = severity, Code = code, Field = field, ItemId = item, Message = message });

    public static string Field(int entity) => $"ifc #{entity}";
}
