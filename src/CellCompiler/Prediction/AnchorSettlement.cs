namespace CellCompiler.Prediction;

/// <summary>
/// Gives a table its one anchor (<see cref="AnchorUnit"/>) before anything is measured into it, and points
/// the meter at it. For a table file this happens under the file's lock: the anchor the file holds (another
/// process may have added it a moment ago) or, when it holds none, one measured now and written at once, so
/// that every process sharing a table scales its units to the same reference.
/// </summary>
public static class AnchorSettlement
{
    /// <summary>The table as its file holds it afterwards, and the anchor's entry when it was measured now.</summary>
    /// <exception cref="Input.InputException">the file holds a table made under other conditions, or is damaged</exception>
    /// <exception cref="Io.OutputException">the file cannot be written</exception>
    public static (LatencyTable Table, UnitTime? Measured) Settle(string path, TableConditions here, UnitMeter meter)
    {
        UnitTime? measured = null;
        var table = LatencyTableFile.Update(path, current =>
        {
            if (current is not null) LatencyPredictor.RequireConditions(current, here, path);
            var (settled, anchor) = Settle(current ?? new LatencyTable(here, []), meter);
            measured = anchor;
            return settled;
        });
        return (table, measured);
    }

    /// <summary>The same for a table in memory: its anchor, or one measured now and added.</summary>
    public static (LatencyTable Table, UnitTime? Measured) Settle(LatencyTable table, UnitMeter meter)
    {
        if (table.Find(AnchorUnit.Instance) is { } anchor)
        {
            meter.UseAnchor(anchor.Ms);
            return (table, null);
        }
        var measured = meter.MeasureAnchor();
        return (table.With([new(AnchorUnit.Instance.Key, measured)], replace: false), measured);
    }
}
