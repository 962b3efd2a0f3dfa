namespace Decohere.Core;

/// <summary>Bad input that is not a scenario file (a data file, an option value, a parameter path); the message names the field and the allowed values.</summary>
public sealed class InputException(string message) : Exception(message);
