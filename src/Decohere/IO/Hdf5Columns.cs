using PureHDF;
using Decohere.Core;

namespace Decohere.IO;

/// <summary>
/// The one-dimensional datasets of one HDF5 group read as the columns of a table: the dataset's name is the column's
/// name, floating-point and integer datasets become numbers, string datasets text. A <c>units</c> (or <c>unit</c>)
/// attribute is honoured: a time unit converts the column to seconds, a dimensionless one ("", "1", "quanta") is
/// kept, and anything else (volts) is refused, since turning volts into quanta needs the gain of a noise calibration.
/// Scalars, matrices and compound datasets are listed in <see cref="Skipped"/>, never read.
/// </summary>
/// <param name="Source">The file name (with the group when not the root), for messages.</param>
/// <param name="Names">Column names in the group's order.</param>
/// <param name="Numbers">Numeric columns read (in seconds for columns with a time unit).</param>
/// <param name="Texts">Text columns read.</param>
/// <param name="Rows">The common length of the columns.</param>
/// <param name="Skipped">Datasets that are not columns, each with the reason.</param>
public sealed record Hdf5Columns(string Source, IReadOnlyList<string> Names, IReadOnlyDictionary<string, double[]> Numbers,
    IReadOnlyDictionary<string, string?[]> Texts, int Rows, IReadOnlyList<string> Skipped)
{
    /// <summary>Separates a file from a group inside it in a data path: <c>run7.h5:/sweep/3</c>.</summary>
    public const char GroupSeparator = ':';

    private static readonly byte[] Signature = [0x89, (byte)'H', (byte)'D', (byte)'F', 0x0d, 0x0a, 0x1a, 0x0a];

    /// <summary>True when the file starts with the HDF5 signature (at byte 0 or after a user block of 512·2ᵏ bytes).</summary>
    public static bool IsHdf5(string path)
    {
        using var stream = File.OpenRead(path);
        var head = new byte[Signature.Length];
        for (long offset = 0; offset + Signature.Length <= stream.Length; offset = offset == 0 ? 512 : offset * 2)
        {
            stream.Position = offset;
            if (stream.Read(head) == head.Length && head.AsSpan().SequenceEqual(Signature)) return true;
        }
        return false;
    }

    /// <summary>
    /// Splits <c>FILE.h5:/group</c> into the file and the group when <paramref name="path"/> is not itself a file and the
    /// part before the last separator is; otherwise returns the path and the root group.
    /// </summary>
    public static (string File, string Group) SplitGroup(string path)
    {
        int at = path.LastIndexOf(GroupSeparator);
        if (File.Exists(path) || at <= 0 || at == path.Length - 1 || !File.Exists(path[..at])) return (path, "/");
        return (path[..at], path[(at + 1)..]);
    }

    /// <summary>Reads the columns of <paramref name="group"/> ("/" for the root).</summary>
    /// <param name="path">The file.</param>
    /// <param name="group">The group whose datasets are the columns.</param>
    /// <param name="select">Given the column names and the row count, the columns to read (null: all); the others are
    /// listed in <see cref="Names"/> but not read.</param>
    /// <param name="cancel">Stops between datasets.</param>
    /// <exception cref="InputException">The file is not readable HDF5, the group does not exist, a column has a unit that
    /// cannot be converted, or the columns differ in length; the message names the file, group and dataset.</exception>
    public static Hdf5Columns Read(string path, string group = "/", Func<IReadOnlyList<string>, int, IReadOnlyCollection<string>>? select = null,
        CancellationToken cancel = default)
    {
        string source = Path.GetFileName(path) + (group is "/" or "" ? "" : GroupSeparator + group);
        try
        {
            using var file = H5File.OpenRead(path);
            IH5Group where = file;
            if (group is not ("/" or ""))
            {
                if (!file.LinkExists(group))
                    throw new InputException($"{source}: no group '{group}' in the file; groups at the root: {Describe(file.Children().OfType<IH5Group>().Select(g => g.Name))}");
                where = file.Group(group);
            }
            var columns = new List<(string Name, IH5Dataset Dataset, ulong Rows)>();
            var skipped = new List<string>();
            // Variable-length data are text only if they read as strings: the probe's result is kept, not read twice.
            var variableText = new Dictionary<string, string?[]>(StringComparer.Ordinal);
            foreach (var child in where.Children())
            {
                cancel.ThrowIfCancellationRequested();
                if (child is not IH5Dataset dataset) continue;
                string name = child.Name;
                var dims = dataset.Space.Dimensions;
                var type = dataset.Type;
                if (dims.Length != 1)
                    skipped.Add($"{name} ({(dims.Length == 0 ? "a scalar" : $"shape {string.Join("×", dims)}")}: a column is one-dimensional)");
                else if (!(type.Class is H5DataTypeClass.String or H5DataTypeClass.FloatingPoint or H5DataTypeClass.FixedPoint ||
                           (type.Class is H5DataTypeClass.VariableLength && TryText(dataset) is { } text && variableText.TryAdd(name, text))))
                    skipped.Add($"{name} ({type.Class.ToString().ToLowerInvariant()} data: a column holds numbers or text)");
                else if (dims[0] > int.MaxValue)
                    throw new InputException($"{source}, dataset {name}: {dims[0]} rows; at most {int.MaxValue}");
                else
                    columns.Add((name, dataset, dims[0]));
            }
            if (columns.Count == 0)
                throw new InputException($"{source}: no one-dimensional datasets to read as columns" +
                    (skipped.Count > 0 ? $" (skipped: {string.Join("; ", skipped)})" : "") +
                    $"; groups here: {Describe(where.Children().OfType<IH5Group>().Select(g => g.Name))} (choose one as FILE{GroupSeparator}/GROUP)");
            if (columns.Select(c => c.Rows).Distinct().Count() > 1)
                throw new InputException($"{source}: the columns differ in length ({string.Join(", ", columns.Select(c => $"{c.Name}: {c.Rows}"))}); " +
                    "keep one table per group");
            int rows = (int)columns[0].Rows;
            string[] names = [.. columns.Select(c => c.Name)];
            var chosen = select?.Invoke(names, rows) ?? names;
            var numbers = new Dictionary<string, double[]>(StringComparer.Ordinal);
            var texts = new Dictionary<string, string?[]>(StringComparer.Ordinal);
            foreach (var (name, dataset, _) in columns.Where(c => chosen.Contains(c.Name)))
            {
                cancel.ThrowIfCancellationRequested();
                if (dataset.Type.Class is H5DataTypeClass.FloatingPoint or H5DataTypeClass.FixedPoint)
                {
                    var values = ReadNumbers(dataset);
                    double scale = Scale(dataset, source, name);
                    if (scale != 1)
                        for (int r = 0; r < values.Length; r++) values[r] *= scale;
                    numbers[name] = values;
                }
                else
                {
                    texts[name] = variableText.GetValueOrDefault(name) ?? dataset.Read<string[]>();
                }
            }
            return new Hdf5Columns(source, names, numbers, texts, rows, skipped);
        }
        catch (Exception e) when (e is not (InputException or OperationCanceledException or OutOfMemoryException))
        {
            // PureHDF reports damaged or unsupported files with its own exception types; all are input errors here.
            throw new InputException($"{source}: not a readable HDF5 file ({e.Message.Split('\n')[0]})");
        }
    }

    private static string?[]? TryText(IH5Dataset dataset)
    {
        try
        {
            return dataset.Read<string[]>();
        }
        catch (Exception)
        {
            return null;
        }
    }

    private static double[] ReadNumbers(IH5Dataset dataset)
    {
        var type = dataset.Type;
        if (type.Class is H5DataTypeClass.FloatingPoint)
            return type.Size switch
            {
                8 => dataset.Read<double[]>(),
                4 => [.. dataset.Read<float[]>().Select(v => (double)v)],
                _ => throw new InputException($"dataset {dataset.Name}: {8 * type.Size}-bit floating point; expected 32 or 64 bits"),
            };
        bool signed = type.FixedPoint.IsSigned;
        return (type.Size, signed) switch
        {
            (1, true) => [.. dataset.Read<sbyte[]>().Select(v => (double)v)],
            (1, false) => [.. dataset.Read<byte[]>().Select(v => (double)v)],
            (2, true) => [.. dataset.Read<short[]>().Select(v => (double)v)],
            (2, false) => [.. dataset.Read<ushort[]>().Select(v => (double)v)],
            (4, true) => [.. dataset.Read<int[]>().Select(v => (double)v)],
            (4, false) => [.. dataset.Read<uint[]>().Select(v => (double)v)],
            (8, true) => [.. dataset.Read<long[]>().Select(v => (double)v)],
            (8, false) => [.. dataset.Read<ulong[]>().Select(v => (double)v)],
            _ => throw new InputException($"dataset {dataset.Name}: {8 * type.Size}-bit integers; expected 8 to 64 bits"),
        };
    }

    // The factor to SI from the dataset's unit attribute: seconds for time units, 1 for dimensionless quantities.
    private static double Scale(IH5Dataset dataset, string source, string name)
    {
        string? unit = null;
        foreach (string key in (string[])["units", "unit"])
            if (dataset.AttributeExists(key))
            {
                try { unit = dataset.Attribute(key).Read<string>(); }
                catch (Exception) { throw new InputException($"{source}, dataset {name}: attribute '{key}' is not a string"); }
                break;
            }
        string u = unit?.Trim() ?? "";
        if (u is "" or "1" or "quanta" or "dimensionless") return 1;
        if (Quantity.TryParse("1 " + u, Dimension.Time, out double seconds, out _)) return seconds;
        throw new InputException($"{source}, dataset {name}: unit '{u}' cannot be used; columns are times ({string.Join(", ", Quantity.UnitsOf(Dimension.Time))}) " +
            "or quanta (no unit, '1', 'quanta'); values in volts need the gain of a noise calibration (decohere fit-noise) to become quanta");
    }

    private static string Describe(IEnumerable<string> names)
    {
        var list = names.Take(20).ToList();
        return list.Count == 0 ? "none" : string.Join(", ", list);
    }
}
