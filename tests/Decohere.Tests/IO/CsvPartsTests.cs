using System.Globalization;
using System.Text;
using Decohere.Core;
using Decohere.IO;

namespace Decohere.Tests.IO;

/// <summary>
/// A CSV large enough to be read in parts on several threads, with every kind of field and line the reader meets: each
/// value must be double.Parse of its trimmed text (bit for bit), text codes in order of first appearance, each row
/// labelled with its file line, and the first bad value in file order named.
/// </summary>
public class CsvPartsTests
{
    [Fact]
    public async Task APartedReadGivesWhatDoubleParseGivesLineByLine()
    {
        const int Rows = 60_000;   // about 2 MB: above the size at which the reader splits the file
        var random = new Random(5);
        string[] labels = ["drum", "lc", "drüm", "x y"];
        var sb = new StringBuilder("x, label ,y\n");
        int line = 1;
        var expectedX = new double[Rows];
        var expectedY = new double[Rows];
        var expectedLines = new int[Rows];
        var expectedLabels = new string[Rows];
        int badRow = -1, badLine = 0;
        for (int r = 0; r < Rows; r++)
        {
            switch (random.Next(40))
            {
                case 0: sb.Append("# a comment\n"); line++; break;
                case 1: sb.Append("   \n"); line++; break;
                case 2: sb.Append("\t# indented comment\r\n"); line++; break;
            }
            double x = Math.Pow(10, random.NextDouble() * 40 - 20) * (random.Next(2) == 0 ? -1 : 1);
            string xs = (random.Next(6)) switch
            {
                0 => x.ToString("E10", CultureInfo.InvariantCulture),
                1 => " " + x.ToString("R", CultureInfo.InvariantCulture) + "\t",
                2 => "\u00A0" + x.ToString("G6", CultureInfo.InvariantCulture),   // non-breaking space: Unicode white space
                3 => random.Next(1000).ToString(CultureInfo.InvariantCulture),
                _ => x.ToString("R", CultureInfo.InvariantCulture),
            };
            string ys = (r * 0.001).ToString("R", CultureInfo.InvariantCulture);
            // One bad value late in the file, and a worse-placed one after it: the first in file order is named.
            if (r == Rows * 3 / 4) { ys = "1e400"; badRow = r; badLine = line + 1; }
            if (r == Rows * 3 / 4 + 10) ys = "abc";
            string label = labels[random.Next(r < Rows / 2 ? 2 : labels.Length)];
            bool quoted = random.Next(50) == 0;
            line++;
            sb.Append(quoted ? $"\"{xs}\",\"{label}\",{ys}" : $"{xs},{label},{ys}").Append(random.Next(3) == 0 ? "\r\n" : "\n");
            expectedX[r] = double.Parse(xs.Trim(), NumberStyles.Float, CultureInfo.InvariantCulture);
            expectedY[r] = double.TryParse(ys, NumberStyles.Float, CultureInfo.InvariantCulture, out double y) ? y : double.NaN;
            expectedLines[r] = line;
            expectedLabels[r] = label;
        }
        string path = Path.Combine(Path.GetTempPath(), $"decohere-parts-{Guid.NewGuid():N}.csv");
        await File.WriteAllTextAsync(path, sb.ToString(), new UTF8Encoding(encoderShouldEmitUTF8Identifier: true));
        try
        {
            Assert.True(new FileInfo(path).Length > (1 << 20));
            var table = await DataTable.LoadAsync(path, (names, rows) =>
            {
                Assert.Equal(["x", "label", "y"], names);
                Assert.Equal(Rows, rows);
                return new ColumnSelection(["x", "y"], ["label"]);
            });
            var xs = table.Numbers("x", "x");
            for (int r = 0; r < Rows; r++)
                Assert.True(BitConverter.DoubleToInt64Bits(expectedX[r]) == BitConverter.DoubleToInt64Bits(xs[r]), $"row {r}: {xs[r]:R}, expected {expectedX[r]:R}");
            var (codes, values) = table.Categories("label");
            Assert.Equal(expectedLabels.Distinct(), values);
            for (int r = 0; r < Rows; r++) Assert.Equal(expectedLabels[r], values[codes[r]]);
            for (int r = 0; r < Rows; r += 97) Assert.Equal($"line {expectedLines[r]}", table.RowLabel(r));
            Assert.Equal($"line {expectedLines[Rows - 1]}", table.RowLabel(Rows - 1));
            var e = Assert.Throws<InputException>(() => table.Numbers("y", "y"));
            Assert.Contains($"line {badLine}, column y: '1e400' is not a finite number", e.Message);
        }
        finally { File.Delete(path); }
    }

    [Fact]
    public async Task AShortRowInTheSecondHalfIsNamedByItsLine()
    {
        var sb = new StringBuilder("delay_s,i,q\n");
        for (int r = 0; r < 80_000; r++) sb.Append(CultureInfo.InvariantCulture, $"{r % 40 * 1e-3:R},{Math.Sin(r):R},{Math.Cos(r):R}\n");
        sb.Append("0.001,2\n");
        for (int r = 0; r < 1000; r++) sb.Append("0.001,1,x\n");
        string path = Path.Combine(Path.GetTempPath(), $"decohere-parts-{Guid.NewGuid():N}.csv");
        await File.WriteAllTextAsync(path, sb.ToString());
        try
        {
            var e = await Assert.ThrowsAsync<InputException>(() => DataTable.LoadAsync(path));
            Assert.Contains("line 80002: 2 fields, but the header has 3 columns", e.Message);
        }
        finally { File.Delete(path); }
    }
}
