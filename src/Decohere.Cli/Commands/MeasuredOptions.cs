using System.CommandLine;
using Decohere.IO;
using Decohere.Scenarios;

namespace Decohere.Cli.Commands;

/// <summary>
/// <c>--fitted FILE</c> (repeatable) and <c>--calibration FILE</c>: values measured by earlier fits, put into the scenario
/// before planning, their errors carried into the result where the analysis can.
/// </summary>
public sealed class MeasuredOptions
{
    /// <summary>--fitted fit.json or joint-fit.json[:SET], repeatable.</summary>
    public Option<string[]> Fitted { get; } = new("--fitted")
    {
        Description = "fit.json of an earlier fit, or joint-fit.json (FILE:SET for one data set's values): its fitted values (bath, damping, " +
            "added noise, by path) replace the scenario's, and their standard errors and correlations are carried into the result. " +
            "Repeatable (a parameter may come from one file only).",
        Arity = ArgumentArity.ZeroOrMore,
        AllowMultipleArgumentsPerToken = false,
    };

    /// <summary>--calibration fit-noise.json.</summary>
    public Option<FileInfo?> Calibration { get; } = new("--calibration")
    {
        Description = "fit-noise.json of a noise calibration: its input-referred added noise, with its error, replaces readout.added_noise " +
            "(the scenario's readout must state added_noise).",
    };

    /// <summary>The two options, to add to a command.</summary>
    public IEnumerable<Option> All => [Fitted, Calibration];

    /// <summary>The values the options name (none when neither is given).</summary>
    /// <exception cref="Core.InputException">A file is missing or malformed, or two files give the same parameter.</exception>
    public MeasuredValues Read(ParseResult parse)
    {
        var values = MeasuredValues.None;
        foreach (var file in parse.GetValue(Fitted) ?? []) values = values.And(FitResultFile.Read(file));
        if (parse.GetValue(Calibration) is { } calibration) values = values.And(CalibrationFile.Read(calibration.FullName).AddedNoiseValue());
        return values;
    }
}
