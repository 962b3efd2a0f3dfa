namespace Decohere.Scenarios;

/// <summary>Nearest valid names for error messages ("did you mean …?"), by Levenshtein edit distance.</summary>
internal static class NameSuggestion
{
    /// <summary>" (did you mean 'x'?)" when a valid name is within a small edit distance, else empty.</summary>
    public static string Suggest(string name, IEnumerable<string> valid, int minimumDistance = 2)
    {
        var best = valid.Select(v => (v, d: Distance(name.ToLowerInvariant(), v.ToLowerInvariant())))
            .OrderBy(p => p.d).FirstOrDefault();
        return best.v is not null && best.d <= Math.Max(minimumDistance, best.v.Length / 3) ? $" (did you mean '{best.v}'?)" : "";
    }

    /// <summary>Levenshtein distance (V. I. Levenshtein, Sov. Phys. Dokl. 10, 707 (1966)), one row of the table at a time.</summary>
    public static int Distance(string a, string b)
    {
        var row = new int[b.Length + 1];
        for (int j = 0; j <= b.Length; j++) row[j] = j;
        for (int i = 1; i <= a.Length; i++)
        {
            int previous = row[0];
            row[0] = i;
            for (int j = 1; j <= b.Length; j++)
            {
                int current = row[j];
                row[j] = Math.Min(Math.Min(row[j] + 1, row[j - 1] + 1), previous + (a[i - 1] == b[j - 1] ? 0 : 1));
                previous = current;
            }
        }
        return row[b.Length];
    }
}
